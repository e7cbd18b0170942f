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
  countedOn: string;
  localDate: string;
  recordedAt: string;
  timeZone: string;
  parcelName: string;
  speciesName: string;
  scientificName: string;
  method: string;
  quantities: { measure: string; quantity: string; unit: string; baseQuantity: string }[];
  seasonStart: string;
  seasonEnd: string;
  breach: boolean;
  correctsEntryId: string | null;
  rootEntryId: string | null;
  correctionReason: string | null;
  isCorrected: boolean;
  recordedByName: string | null;
  hasPhoto: boolean;
  longitude: number | null;
  latitude: number | null;
};

export const ledgerCsvHeader = [
  'entry_id', 'counts_on', 'recorded_on', 'recorded_at', 'time_zone', 'parcel', 'species', 'scientific_name', 'method',
  'quantity', 'unit', 'base_quantity', 'measure', 'season_start', 'season_end', 'breach',
  'corrects_entry_id', 'root_entry_id', 'correction_reason', 'corrected_later', 'recorded_by', 'photo', 'latitude', 'longitude',
] as const;

/**
 * The ledger as a CSV file: one record per entry and measure (an entry of "150 g and 30 plants" is
 * two records with one entry_id), ISO 8601 dates, quantities as recorded beside their base-unit value.
 * `counts_on` is the parcel-local day the entry counts on; `recorded_at` an instant in UTC.
 */
export function ledgerCsv(entries: readonly LedgerCsvEntry[]): string {
  return buildCsv(
    ledgerCsvHeader,
    entries.flatMap((e) =>
      e.quantities.map((q) => [
        e.id, e.countedOn, e.localDate, e.recordedAt, e.timeZone, plainText(e.parcelName), plainText(e.speciesName), plainText(e.scientificName), e.method,
        q.quantity, q.unit, q.baseQuantity, q.measure, e.seasonStart, e.seasonEnd, e.breach,
        e.correctsEntryId, e.rootEntryId, plainText(e.correctionReason), e.isCorrected, plainText(e.recordedByName), e.hasPhoto, e.latitude, e.longitude,
      ]),
    ),
  );
}

/** `tallywood-ledger-YYYY-MM-DD.csv`, dated on the clock of the parcels it covers. */
export function ledgerCsvFilename(localDate: string): string {
  return `tallywood-ledger-${localDate}.csv`;
}
