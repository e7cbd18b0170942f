import type { SeasonReport } from '../db/reports.queries';
import { formatAmount, formatLimit, formatPercent, formatSeasonDates, reportBasisWords, stateLabel, unitAfter } from './tally-words';

type ReportSpecies = SeasonReport['species'][number];
type ReportTally = ReportSpecies['tallies'][number];

/** The species taken in one season occurrence, under one heading. */
export type ReportSeasonGroup = { season: { start: string; end: string }; species: ReportSpecies[] };

/**
 * How a season report reads: each season occurrence once, as a heading, with a row per species
 * taken in it; the species nothing was taken of in one line at the end, not a row each.
 */
export function reportLayout(report: Pick<SeasonReport, 'species'>): { groups: ReportSeasonGroup[]; untaken: ReportSpecies[] } {
  const groups: ReportSeasonGroup[] = [];
  for (const s of report.species.filter(wasTaken)) {
    const group = groups.find((g) => g.season.start === s.season.start && g.season.end === s.season.end);
    if (group) group.species.push(s);
    else groups.push({ season: s.season, species: [s] });
  }
  groups.sort((a, b) => a.season.start.localeCompare(b.season.start) || a.season.end.localeCompare(b.season.end));
  return { groups, untaken: report.species.filter((s) => !wasTaken(s)) };
}

export const wasTaken = (s: ReportSpecies): boolean => s.taken.length > 0;

/** "Season Jul 1 – Sep 30, 2026" */
export const seasonHeading = (season: { start: string; end: string }): string => `Season ${formatSeasonDates(season)}`;

/** "1 kg a day: busiest day 0.85 kg (85 %), ◑ nearing" */
export function reportTallyLine(t: ReportTally): string {
  const limit = `${formatLimit({ ...t.limit, scope: t.scope })}${t.limit.fromPermit ? ' (permit)' : ''}`;
  return `${limit}: ${reportBasisWords[t.scope]} ${formatAmount(t.used)} ${unitAfter(t.used, t.limit.unit)} (${formatPercent(t.percent)}), ${stateLabel(t.state)}`;
}

const count = (n: number, one: string, many: string) => `${n} ${n === 1 ? one : many}`;

/** "3 entries by 2 foragers" */
export const entriesWords = (s: ReportSpecies): string => `${count(s.entries, 'entry', 'entries')} by ${count(s.foragers, 'forager', 'foragers')}`;

/** "Nothing taken of Chaga or King bolete." — or null when every species was taken. */
export function untakenLine(untaken: readonly ReportSpecies[]): string | null {
  if (untaken.length === 0) return null;
  const names = untaken.map((s) => s.commonName);
  const list = names.length === 1 ? names[0] : `${names.slice(0, -1).join(', ')} or ${names.at(-1)}`;
  return `Nothing taken of ${list}.`;
}
