import { buildCsv, plainText, type CsvCell } from './csv';
import type { SeasonReport } from '../db/reports.queries';

const header = ['section', 'species', 'scientific_name', 'season_start', 'season_end', 'scope', 'limit', 'unit', 'used', 'percent', 'state', 'forager', 'date', 'follow_up'] as const;

/** The season report as one RFC 4180 table: a `tally` record per species and limit, a `breach` record per breach. */
export function seasonReportCsv(report: Pick<SeasonReport, 'species' | 'breaches'>): string {
  const tallies: CsvCell[][] = report.species.flatMap((s) =>
    s.tallies.map((t) => ['tally', plainText(s.commonName), plainText(s.scientificName), s.season.start, s.season.end, t.scope, t.limit.quantity, t.limit.unit, t.used, t.percent, t.state, null, null, null]),
  );
  const breaches: CsvCell[][] = report.breaches.map((b) => [
    'breach', plainText(b.commonName), null, null, null, b.scopes.join(' '), null, b.entry.unit, b.entry.quantity, null, b.worstState, plainText(b.foragerName), b.entry.localDate,
    plainText(b.notes.length > 0 ? `${b.handled ? 'handled' : 'open'}: ${b.notes[b.notes.length - 1]?.note}` : 'open: no follow-up yet'),
  ]);
  return buildCsv(header, [...tallies, ...breaches]);
}
