import { formatDate, formatInstantIn } from '../../lib/format';
import { formatAmount, formatQuantities, formatSeasonDates, measureBaseWords } from '../../lib/tally-words';
import { units, type Measure } from '../../lib/units';
import type { LedgerEntry } from '../../db/ledger.queries';

/** An entry as the table shows it: its corrections beneath it, and the text the search box looks in. */
export type LedgerRow = LedgerEntry & {
  subRows: LedgerRow[];
  /** The entry this one corrects, when it is in the ledger. */
  corrects: LedgerEntry | null;
  /** Lower-case text of the entry and every correction in its group, so a search keeps the group together. */
  searchText: string;
};

/**
 * Nests each correction under the entry it corrects (corrections of corrections nest again). An
 * entry whose target is not in the list stands on its own, so nothing is ever hidden.
 */
export function buildLedgerRows(entries: readonly LedgerEntry[]): LedgerRow[] {
  const byId = new Map<string, LedgerRow>(entries.map((e) => [e.id, { ...e, subRows: [], corrects: null, searchText: '' }]));
  const roots: LedgerRow[] = [];
  for (const row of byId.values()) {
    const parent = row.correctsEntryId ? byId.get(row.correctsEntryId) : undefined;
    if (parent && parent !== row) {
      row.corrects = parent;
      parent.subRows.push(row);
    } else roots.push(row);
  }
  for (const root of roots) {
    const group = flatten(root);
    const text = group.map(wordsOf).join(' ').toLowerCase();
    for (const row of group) row.searchText = text;
  }
  return roots;
}

function flatten(row: LedgerRow): LedgerRow[] {
  return [row, ...row.subRows.flatMap(flatten)];
}

function wordsOf(e: LedgerEntry): string {
  return [
    e.parcelName, e.speciesName, e.scientificName, e.method, ...e.quantities.map((q) => units[q.unit].label), e.countedOn, formatDate(e.countedOn),
    e.correctionReason ?? '', e.recordedByName ?? '', e.breach ? 'breach' : '', e.correctsEntryId ? 'correction' : '', e.isCorrected ? 'corrected' : '',
  ].join(' ');
}

/** "12 oz", "150 g and 30 plants", "−100 g" (a correction shows its sign, "+50 g" too). Display only: the CSV keeps every digit. */
export function formatEntryQuantities(entry: Pick<LedgerEntry, 'quantities' | 'correctsEntryId'>): string {
  return formatQuantities(entry.quantities, { signed: Boolean(entry.correctsEntryId) });
}

/** A base-unit amount: "740.194 g", "1,250 mL", "12 plants". */
export function formatBase(quantity: string, measure: Measure): string {
  return `${formatAmount(quantity)} ${measureBaseWords[measure]}`;
}

/** "Nov 1, 2026 – Mar 15, 2027": the season occurrence stored on the entries. */
export const formatSeason = (s: { seasonStart: string; seasonEnd: string }): string => formatSeasonDates({ start: s.seasonStart, end: s.seasonEnd });

/** "Nov 14, 2026, 10:32 AM EST": when an entry was recorded, on the parcel's clock, with its zone named. */
export const formatRecordedAt = (iso: string, timeZone: string): string => formatInstantIn(iso, timeZone);

/** Sort key for quantities: by measure first, so grams never sort among stems. */
export function quantityOrder(a: LedgerEntry, b: LedgerEntry): number {
  const [x, y] = [a.quantities[0], b.quantities[0]];
  if (!x || !y) return Number(Boolean(x)) - Number(Boolean(y));
  if (x.measure !== y.measure) return x.measure < y.measure ? -1 : 1;
  return Number(x.baseQuantity) - Number(y.baseQuantity);
}

/** The same words as the allowance form (src/components/forms/AllowanceForm.tsx). */
export const methodLabels: Record<LedgerEntry['method'], string> = {
  cut: 'cut above ground', pick: 'pick', dig: 'dig roots or bulbs', strip: 'strip bark', 'gather-fallen': 'gather fallen',
};
