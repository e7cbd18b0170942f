import { formatDate } from '../../lib/format';
import { units } from '../../lib/units';
import type { LedgerEntry, LedgerTotal } from '../../db/ledger.queries';

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
    e.parcelName, e.speciesName, e.scientificName, e.method, units[e.unit].label, e.localDate, formatDate(e.localDate),
    e.correctionReason ?? '', e.recordedByName ?? '', e.breach ? 'breach' : '', e.correctsEntryId ? 'correction' : '', e.isCorrected ? 'corrected' : '',
  ].join(' ');
}

const numberFormat = new Intl.NumberFormat('en-US', { maximumFractionDigits: 3 });
const signedFormat = new Intl.NumberFormat('en-US', { maximumFractionDigits: 3, signDisplay: 'exceptZero' });

/** "12 oz", "−100 g" (a correction shows its sign, "+50 g" too). Display only: the CSV keeps every digit. */
export function formatQuantity(entry: Pick<LedgerEntry, 'quantity' | 'unit' | 'correctsEntryId'>): string {
  const format = entry.correctsEntryId ? signedFormat : numberFormat;
  return `${format.format(Number(entry.quantity)).replace('-', '−')} ${units[entry.unit].label}`;
}

/** A base-unit amount: "740.194 g", "1,250 mL", "12 counted". */
export function formatBase(quantity: string, baseUnit: LedgerEntry['baseUnit']): string {
  const amount = numberFormat.format(Number(quantity)).replace('-', '−');
  return baseUnit === 'count' ? `${amount} counted` : `${amount} ${baseUnit}`;
}

/** "1 Nov 2026 – 15 Mar 2027", or "2026 (calendar year)" where no allowance season held the date. */
export function formatSeason(s: Pick<LedgerTotal, 'seasonStart' | 'seasonEnd' | 'seasonBasis'>): string {
  if (s.seasonBasis === 'calendar-year') return `${s.seasonStart.slice(0, 4)} (calendar year)`;
  return `${formatDate(s.seasonStart)} – ${formatDate(s.seasonEnd)}`;
}

/** "2026-11-14 10:32 UTC" */
export function formatRecordedAt(iso: string): string {
  return `${iso.slice(0, 16).replace('T', ' ')} UTC`;
}

/** Sort key for quantities: by dimension first, so grams never sort among stems. */
export function quantityOrder(a: LedgerEntry, b: LedgerEntry): number {
  if (a.dimension !== b.dimension) return a.dimension < b.dimension ? -1 : 1;
  return Number(a.baseQuantity) - Number(b.baseQuantity);
}

/** The same words as the allowance form (src/components/forms/AllowanceForm.tsx). */
export const methodLabels: Record<LedgerEntry['method'], string> = {
  cut: 'cut above ground', pick: 'pick', dig: 'dig roots or bulbs', strip: 'strip bark', 'gather-fallen': 'gather fallen',
};
