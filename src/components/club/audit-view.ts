import type { SortDirection } from '@tanstack/react-table';
import { scopeOrder } from '../../lib/field/tallies';
import type { LimitScope, Method, Tally, TallyState } from '../../lib/field/types';
import {
  auditScopeWords, flagScopeWords, formatAmount, formatPercent, formatSeasonDates, formatUsage, stateSymbols, stateWords, tallyStates, unitLabel,
} from '../../lib/tally-words';
import type { AuditRow } from '../../db/audit.queries';
import { methodLabels } from '../ledger/ledger-view';

/** The words every screen shares (src/lib/tally-words.ts), under the names the audit's islands use. */
export { formatAmount, formatPercent, formatUsage, stateSymbols, stateWords, tallyStates, unitLabel };
export const auditScopeLabels = auditScopeWords;
export const flagScopeLabels = flagScopeWords;

/** The chart's fill for each state, as words for its legend. */
export const statePatterns: Record<TallyState, string> = { within: 'solid', nearing: 'hatched', reached: 'cross-hatched', over: 'dark, cross-hatched' };

export const stateTones: Record<TallyState, string> = {
  within: 'border-moss-300 text-moss-800',
  nearing: 'border-loam-500 text-loam-800',
  reached: 'border-ember-500 text-ember-700',
  over: 'border-2 border-ember-700 bg-ember-50 text-ember-700',
};

/** Ground and ink of each state's chart fill: solid, hatched, cross-hatched, dark cross-hatched (tailwind.config.ts colours). */
export const stateFills: Record<TallyState, { ground: string; ink: string; edge: string }> = {
  within: { ground: '#4f7d47', ink: '#4f7d47', edge: '#314f2e' },
  nearing: { ground: '#eee7dd', ink: '#73553b', edge: '#73553b' },
  reached: { ground: '#fae1cd', ink: '#a8481a', edge: '#a8481a' },
  over: { ground: '#86391a', ink: '#ffffff', edge: '#86391a' },
};

const stateRank: Record<TallyState, number> = { within: 0, nearing: 1, reached: 2, over: 3 };

export const isTallyState = (value: string): value is TallyState => value in stateRank;

/** For sorting: no limit sorts below within. */
export const rankOf = (state: TallyState | null): number => (state ? stateRank[state] : -1);

/** The state select above the audit table. */
export type StateChoice = 'all' | 'nearing' | 'over';

export const stateChoices: { value: StateChoice; label: string }[] = [
  { value: 'all', label: 'All rows' },
  { value: 'nearing', label: 'Nearing or worse' },
  { value: 'over', label: 'Over only' },
];

export function matchesStateChoice(state: TallyState | null, choice: StateChoice): boolean {
  if (choice === 'nearing') return rankOf(state) >= stateRank.nearing;
  if (choice === 'over') return state === 'over';
  return true;
}

/** The limit scopes present in the rows, in the field engine's order. */
export function scopesPresent(rows: readonly AuditRow[]): LimitScope[] {
  const seen = new Set(rows.flatMap((r) => r.tallies.map((t) => t.scope)));
  return scopeOrder.filter((s) => seen.has(s));
}

export const formatTally = (t: Tally): string => formatUsage({ used: t.used, limit: t.limit.quantity, unit: t.limit.unit, percent: t.percent });

export const formatSeason = formatSeasonDates;

export const formatMethod = (method: string): string => methodLabels[method as Method] ?? method;

/** [longitude, latitude] (RFC 7946 §3.1.1 order) read the way people say it: "latitude, longitude". */
export const formatPosition = ([lon, lat]: [number, number]): string => `${lat.toFixed(5)}, ${lon.toFixed(5)}`;

/** One audit row's identity: a forager's entries of a species on a parcel. */
export const auditRowKey = (r: Pick<AuditRow, 'parcelId' | 'speciesId' | 'foragerId'>): string => [r.parcelId, r.speciesId, r.foragerId].join('|');

/** The entries behind a row, for the season the audit shows (on `asOf`, or today on the parcel). */
export function entriesQuery(r: Pick<AuditRow, 'parcelId' | 'speciesId' | 'foragerId'>, asOf: string | null): string {
  return new URLSearchParams({ parcelId: r.parcelId, speciesId: r.speciesId, foragerId: r.foragerId, ...(asOf ? { asOf } : {}) }).toString();
}

/** The tallies of one scope in a row, one per measure its limits count ("200 g or 50 plants"). */
export const talliesOfScope = (r: Pick<AuditRow, 'tallies'>, scope: LimitScope): Tally[] => r.tallies.filter((t) => t.scope === scope);

/** The chart's right edge: past 100 % with room to spare, but a wild overrun does not flatten every other bar. */
export function chartCeiling(percents: readonly number[]): number {
  const top = Math.max(100, ...percents);
  return Math.min(200, Math.max(120, Math.ceil(top / 20) * 20));
}

export const ariaSort = (direction: false | SortDirection) => (direction === 'asc' ? 'ascending' : direction === 'desc' ? 'descending' : 'none');

export const capitalise = (s: string): string => s.charAt(0).toUpperCase() + s.slice(1);

export function isIsoDate(value: string): boolean {
  return /^\d{4}-\d{2}-\d{2}$/.test(value) && !Number.isNaN(Date.parse(`${value}T00:00:00Z`));
}
