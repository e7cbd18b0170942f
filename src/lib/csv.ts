/**
 * Comma-separated values as RFC 4180 (October 2005) §2 describes them: records end in CRLF (rule 1),
 * an optional header line has the same shape as the records (rule 3), fields are separated by commas
 * (rule 4), a field holding a comma, a double quote, CR or LF is enclosed in double quotes (rule 6),
 * and a double quote inside it is doubled (rule 7). §3 registers `text/csv` with `header=present`.
 */
export type CsvCell = string | number | boolean | null | undefined;

export const csvContentType = 'text/csv; charset=utf-8; header=present';

/** One field: empty for null, quoted only when rule 6 asks for it. */
export function csvField(value: CsvCell): string {
  if (value === null || value === undefined) return '';
  const text = String(value);
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** A whole file: the header, then one record per row, every line ending in CRLF. */
export function buildCsv(header: readonly string[], rows: readonly (readonly CsvCell[])[]): string {
  return [header, ...rows].map((record) => `${record.map(csvField).join(',')}\r\n`).join('');
}

/**
 * Text typed by people (parcel names, reasons) that a spreadsheet would run as a formula when it
 * begins with = + - @ or a tab or CR (OWASP, "CSV Injection"). A leading apostrophe keeps it text.
 * Only for free text: numbers and dates are written as they are, so a negative correction stays -100.
 */
export function plainText(value: string | null | undefined): string | null {
  if (value === null || value === undefined) return null;
  return /^[=+\-@\t\r]/.test(value) ? `'${value}` : value;
}

/** The fields of a ledger entry the export writes; structurally what `listLedger` returns. */
export type LedgerCsvEntry = {
  id: string;
  localDate: string;
  recordedAt: string;
  parcelName: string;
  speciesName: string;
  scientificName: string;
  method: string;
  quantity: string;
  unit: string;
  baseQuantity: string;
  baseUnit: string;
  dimension: string;
  seasonStart: string;
  seasonEnd: string;
  seasonBasis: string;
  breach: boolean;
  correctsEntryId: string | null;
  correctionReason: string | null;
  isCorrected: boolean;
  recordedByName: string | null;
  hasPhoto: boolean;
  longitude: number | null;
  latitude: number | null;
};

export const ledgerCsvHeader = [
  'entry_id', 'local_date', 'recorded_at', 'parcel', 'species', 'scientific_name', 'method',
  'quantity', 'unit', 'base_quantity', 'base_unit', 'dimension',
  'season_start', 'season_end', 'season_basis', 'breach',
  'corrects_entry_id', 'correction_reason', 'corrected_later', 'recorded_by', 'photo', 'latitude', 'longitude',
] as const;

/** The ledger as a CSV file: ISO 8601 dates, quantities as recorded beside their base-unit value. */
export function ledgerCsv(entries: readonly LedgerCsvEntry[]): string {
  return buildCsv(
    ledgerCsvHeader,
    entries.map((e) => [
      e.id, e.localDate, e.recordedAt, plainText(e.parcelName), plainText(e.speciesName), plainText(e.scientificName), e.method,
      e.quantity, e.unit, e.baseQuantity, e.baseUnit, e.dimension,
      e.seasonStart, e.seasonEnd, e.seasonBasis, e.breach,
      e.correctsEntryId, plainText(e.correctionReason), e.isCorrected, plainText(e.recordedByName), e.hasPhoto, e.latitude, e.longitude,
    ]),
  );
}

/** `tallywood-ledger-YYYY-MM-DD.csv` for the UTC day of `now`. */
export function ledgerCsvFilename(now: Date): string {
  return `tallywood-ledger-${now.toISOString().slice(0, 10)}.csv`;
}
