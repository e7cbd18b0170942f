import type { LedgerEntry } from '../../db/ledger.queries';
import { addDecimals, compareDecimals, convert, divideDecimals, subtractDecimals, type Measure, type Unit } from '../../lib/units';

/** One measure of a correction chain: what it counts now, in the unit the first entry used. */
export type ChainMeasure = { measure: Measure; unit: Unit; counts: string };

/** A correction as the API takes it (POST /api/harvest-entries/{id}/corrections): signed quantities. */
export type CorrectionQuantity = { quantity: string; unit: Unit };

/** The API keeps six decimals of an entered quantity (src/lib/field.schemas.ts, quantityText). */
const places = 6;

/**
 * The chain an entry belongs to: the first entry and every correction of it, oldest first. An entry
 * whose first entry is not in the list (it cannot be, the ledger is the forager's own) stands alone.
 */
export function chainOf(entries: readonly LedgerEntry[], entry: LedgerEntry): LedgerEntry[] {
  const rootId = entry.rootEntryId ?? entry.id;
  const chain = entries.filter((e) => e.id === rootId || e.rootEntryId === rootId);
  return (chain.length > 0 ? chain : [entry]).sort((a, b) => (a.recordedAt < b.recordedAt ? -1 : a.recordedAt > b.recordedAt ? 1 : 0));
}

/**
 * What a chain counts now in each measure of its first entry, in that entry's unit: the sum of every
 * entry of the chain (corrections are signed). Exact when the chain kept to one unit, as corrections
 * made from the ledger do; another unit of the same measure is converted (NIST factors, src/lib/units.ts).
 */
export function chainMeasures(chain: readonly LedgerEntry[]): ChainMeasure[] {
  const root = chain.find((e) => !e.correctsEntryId) ?? chain[0];
  if (!root) return [];
  return root.quantities.map(({ measure, unit }) => {
    const parts = chain.flatMap((e) => e.quantities.filter((q) => q.measure === measure)).map((q) => (q.unit === unit ? q.quantity : convert(q.quantity, q.unit, unit)));
    return { measure, unit, counts: addDecimals('0', ...parts) };
  });
}

/** Rounds to the API's six places toward zero, so taking back never asks for more than is left. */
const toPlaces = (value: string) => divideDecimals(value, '1', places, 'toward-zero');

/**
 * The signed quantities that bring a chain to new amounts (one per measure, in its unit), leaving out
 * any measure that does not change. Empty when nothing changes.
 */
export function adjustTo(measures: readonly ChainMeasure[], amounts: readonly string[]): CorrectionQuantity[] {
  return measures.flatMap((m, i) => {
    const change = toPlaces(subtractDecimals(amounts[i] ?? m.counts, m.counts));
    return compareDecimals(change, '0') === 0 ? [] : [{ quantity: change, unit: m.unit }];
  });
}

/** The signed quantities that take a chain back to nothing: what it counts now, negated. */
export function reverseAll(measures: readonly ChainMeasure[]): CorrectionQuantity[] {
  return adjustTo(measures, measures.map(() => '0'));
}
