import { describe, expect, it } from 'vitest';
import type { SeasonReport } from '../../src/db/reports.queries';
import { seasonReportCsv } from '../../src/lib/season-report-csv';
import { reportLayout, reportTallyLine, untakenLine } from '../../src/lib/season-report-words';

/* How a season report reads: each season once, a row per species taken, the rest in one line. */

type Species = SeasonReport['species'][number];
const dayTally: Species['tallies'][number] = { scope: 'day', measure: 'mass', limit: { quantity: '1', unit: 'kg', fromPermit: false }, used: '0.85', remaining: '0.15', percent: 85, state: 'nearing' };
const species = (commonName: string, season: { start: string; end: string }, taken: boolean): Species => ({
  speciesId: commonName, commonName, scientificName: `${commonName} sp.`, season, tallies: [dayTally],
  taken: taken ? [{ measure: 'mass', quantity: '0.85', unit: 'kg' }] : [], foragers: taken ? 1 : 0, entries: taken ? 1 : 0,
});
const summer = { start: '2026-07-01', end: '2026-09-30' };
const winter = { start: '2025-11-01', end: '2026-03-15' };

describe('reportLayout', () => {
  it('given species in two seasons, some untaken, it groups the taken by season (earliest first) and leaves the untaken aside', () => {
    const report = { species: [species('Oyster mushroom', summer, true), species('Chaga', winter, true), species('King bolete', summer, false), species('Hen of the woods', summer, true)] };
    const { groups, untaken } = reportLayout(report);
    expect(groups.map((g) => [g.season.start, g.species.map((s) => s.commonName)])).toEqual([
      ['2025-11-01', ['Chaga']],
      ['2026-07-01', ['Oyster mushroom', 'Hen of the woods']],
    ]);
    expect(untaken.map((s) => s.commonName)).toEqual(['King bolete']);
  });
});

describe('untakenLine', () => {
  it('given none, one or three untaken species, it says nothing, names one, or lists them with "or"', () => {
    expect(untakenLine([])).toBeNull();
    expect(untakenLine([species('Chaga', winter, false)])).toBe('Nothing taken of Chaga.');
    expect(untakenLine(['Chaga', 'King bolete', 'Ramps'].map((n) => species(n, summer, false)))).toBe('Nothing taken of Chaga, King bolete or Ramps.');
  });
});

describe('reportTallyLine', () => {
  it('given 0.85 kg on a 1 kg day limit, it reads the busiest day with its unit, percentage and state', () => {
    expect(reportTallyLine(dayTally)).toBe('1 kg a day: busiest day 0.85 kg (85 %), ◑ nearing');
  });
});

describe('seasonReportCsv', () => {
  it('given a species nothing was taken of, it writes no tally record for it', () => {
    const csv = seasonReportCsv({ species: [species('Oyster mushroom', summer, true), species('King bolete', summer, false)], breaches: [] });
    const names = csv.trim().split('\r\n').slice(1).map((line) => line.split(',')[1]);
    expect(names).toEqual(['Oyster mushroom']);
  });
});
