import { buildCsv, plainText, type CsvCell } from './csv';
import { wasTaken } from './season-report-words';
import { stateWords } from './tally-words';
import type { SeasonReport } from '../db/reports.queries';

const header = ['section', 'species', 'scientific_name', 'season_start', 'season_end', 'scope', 'measure', 'limit', 'unit', 'used', 'percent', 'state', 'forager', 'date', 'follow_up'] as const;

/** "season-report-cobble-ridge-lot-2026-12-02.csv" */
export const seasonReportFileName = (report: Pick<SeasonReport, 'parcel' | 'asOf'>): string =>
  `season-report-${report.parcel.name.replace(/[^A-Za-z0-9]+/g, '-').toLowerCase()}-${report.asOf}.csv`;

/**
 * The season report as one RFC 4180 table: a `tally` record per species taken and limit (a species
 * nothing was taken of has none), a `breach` record per breach and quantity. States are the words every screen uses; percentages are the
 * tallies' own (half up to one decimal); dates are the parcel-local days entries count on.
 */
export function seasonReportCsv(report: Pick<SeasonReport, 'species' | 'breaches'>): string {
  const tallies: CsvCell[][] = report.species.filter(wasTaken).flatMap((s) =>
    s.tallies.map((t) => ['tally', plainText(s.commonName), plainText(s.scientificName), s.season.start, s.season.end, t.scope, t.measure, t.limit.quantity, t.limit.unit, t.used, t.percent, stateWords[t.state], null, null, null]),
  );
  const breaches: CsvCell[][] = report.breaches.flatMap((b) =>
    b.entry.quantities.map((q) => [
      'breach', plainText(b.commonName), null, null, null, b.scopes.join(' '), null, null, q.unit, q.quantity, null, b.worstState, plainText(b.foragerName), b.entry.countedOn,
      plainText(b.notes.length > 0 ? `${b.handled ? 'handled' : 'open'}: ${b.notes[b.notes.length - 1]?.note}` : 'open: no follow-up yet'),
    ]),
  );
  return buildCsv(header, [...tallies, ...breaches]);
}
