import { formatDate } from './format';
import type { LimitScope, SpeciesState, TallyState } from './field/types';
import { units, type Measure, type Unit } from './units';

/**
 * The words and symbols of tallies, shared by every screen, report, e-mail and CSV, so a state or
 * a percentage reads the same wherever a person meets it.
 */

export const tallyStates: TallyState[] = ['within', 'nearing', 'reached', 'over'];

export const stateWords: Record<TallyState, string> = { within: 'within', nearing: 'nearing', reached: 'reached', over: 'over' };

/** A second signal beside the word and the colour, so a state reads in greyscale and in print. */
export const stateSymbols: Record<TallyState, string> = { within: '✓', nearing: '◑', reached: '●', over: '✕' };

/** "◑ nearing": the symbol and the word, as every report, e-mail and CSV writes a state. */
export const stateLabel = (state: TallyState): string => `${stateSymbols[state]} ${stateWords[state]}`;

/** A species at a check-in: its season and method first, else its worst tally. */
export const speciesStateWords: Record<SpeciesState, string> = {
  open: 'open', 'out-of-season': 'out of season', 'method-not-allowed': 'method not allowed',
  within: 'within limits', nearing: 'nearing a limit', reached: 'limit reached', over: 'over a limit',
};

/** What each scope counts, said to the forager at a check-in. */
export const fieldScopeWords: Record<LimitScope, string> = {
  visit: 'this visit', day: 'today', season: 'your season', 'parcel-season': 'everyone this season', 'club-season': 'your club this season',
};

/** How an audit or report reads each scope: visit and day tallies hold a forager's busiest one. */
export const auditScopeWords: Record<LimitScope, string> = {
  visit: 'busiest visit', day: 'busiest day', season: 'season', 'parcel-season': 'everyone', 'club-season': 'club',
};

/** How a season report reads each scope's tally: the busiest visit or day, the highest forager, everyone on the parcel, the club. */
export const reportBasisWords: Record<LimitScope, string> = {
  visit: 'busiest visit', day: 'busiest day', season: 'highest forager', 'parcel-season': 'everyone on the parcel', 'club-season': 'the club',
};

/** What follows a limit's amount: "500 g a visit", "1 kg a season". Per-forager scopes say no more; the shared ones say who shares them. */
export const limitPerWords: Record<LimitScope, string> = {
  visit: 'a visit', day: 'a day', season: 'a season', 'parcel-season': 'a season for everyone together', 'club-season': 'a season for the whole club',
};

/** How a flag names the tallies an entry raised: as they stood after that one entry. */
export const flagScopeWords: Record<LimitScope, string> = {
  visit: 'visit', day: 'day', season: 'season', 'parcel-season': 'everyone this season', 'club-season': 'club this season',
};

const amountFormat = new Intl.NumberFormat('en-US', { maximumFractionDigits: 3 });
const signedFormat = new Intl.NumberFormat('en-US', { maximumFractionDigits: 3, signDisplay: 'exceptZero' });
const percentFormat = new Intl.NumberFormat('en-US', { maximumFractionDigits: 1 });

/** A decimal string for reading: "1,250", "0.333", "−50". Display only; the API and CSVs keep every digit. */
export const formatAmount = (decimal: string, { signed = false } = {}): string => (signed ? signedFormat : amountFormat).format(Number(decimal)).replace('-', '−');

/**
 * A tally's percentage as it reads: "68.5 %". The figure is already rounded half up to one decimal
 * (percentOf in src/lib/units.ts); this only writes it.
 */
export const formatPercent = (percent: number): string => `${percentFormat.format(percent)} %`;

export const unitLabel = (unit: string): string => units[unit as Unit]?.label ?? unit;

/** The unit after an amount: "1 US liquid quart", "4 US liquid quarts", "1 plant". */
export const unitAfter = (amount: string, unit: string): string => {
  const known = units[unit as Unit];
  if (!known) return unit;
  return Math.abs(Number(amount)) === 1 ? known.one : known.many;
};

/** "1.5 kg", "30 plants"; a correction shows its sign ("+50 g", "−100 g"). */
export const formatQuantity = ({ quantity, unit }: { quantity: string; unit: string }, options: { signed?: boolean } = {}): string =>
  `${formatAmount(quantity, options)} ${unitAfter(quantity, unit)}`;

const limitAmountFormat = new Intl.NumberFormat('en-US', { maximumFractionDigits: 6 });

/**
 * One limit in words, the one way every land screen and message writes it: "500 g a visit",
 * "1.5 kg a season", "1,200 plants a season for everyone together". The stored decimal ("1.500000")
 * loses its trailing zeros and gains thousands separators; every digit a limit may hold (six
 * decimals) is kept, so a limit never reads rounded.
 */
export function formatLimit({ quantity, unit, scope }: { quantity: string; unit: string; scope: string }): string {
  const per = limitPerWords[scope as LimitScope] ?? scope;
  return `${limitAmountFormat.format(Number(quantity))} ${unitAfter(quantity, unit)} ${per}`;
}

/** Several limits: "500 g a visit and 2 kg a season". */
export const formatLimits = (limits: readonly { quantity: string; unit: string; scope: string }[]): string => limits.map(formatLimit).join(' and ');

/** "150 g and 30 plants". */
export function formatQuantities(quantities: readonly { quantity: string; unit: string }[], options: { signed?: boolean } = {}): string {
  return quantities.map((q) => formatQuantity(q, options)).join(' and ');
}

/** "340 / 500 g (68 %)" */
export function formatUsage({ used, limit, unit, percent }: { used: string; limit: string; unit: string; percent: number }): string {
  return `${formatAmount(used)} / ${formatAmount(limit)} ${unitAfter(limit, unit)} (${formatPercent(percent)})`;
}

/** What a measure's totals are in: "g", "mL", or the things counted. */
export const measureBaseWords: Record<Measure, string> = { mass: 'g', volume: 'mL', stems: 'stems', bulbs: 'bulbs', 'fruiting-bodies': 'fruiting bodies', plants: 'plants' };

const monthDayFormat = new Intl.DateTimeFormat('en-US', { timeZone: 'UTC', month: 'short', day: 'numeric' });

/** "Nov 15" from '11-15' (a yearly date, read in no particular year: 02-29 is Feb 29). */
export function formatMonthDay(monthDay: string): string {
  const [m, d] = monthDay.split('-').map(Number);
  return monthDayFormat.format(new Date(Date.UTC(2028, (m ?? 1) - 1, d ?? 1)));
}

/** A yearly season window in words: "Sep 1 – Nov 30", "Nov 15 – Feb 28, across New Year", "all year". */
export function formatSeasonWindow({ start, end }: { start: string; end: string }): string {
  if (start === '01-01' && end === '12-31') return 'all year';
  return `${formatMonthDay(start)} – ${formatMonthDay(end)}${start > end ? ', across New Year' : ''}`;
}

/** Several windows: "Apr 15 – May 31 and Sep 1 – Oct 15". */
export const formatSeasonWindows = (windows: readonly { start: string; end: string }[]): string =>
  windows.length === 0 ? 'no season set' : windows.map(formatSeasonWindow).join(' and ');

/** One season occurrence, with its years: "Nov 1, 2026 – Mar 15, 2027". */
export const formatSeasonDates = ({ start, end }: { start: string; end: string }): string => `${formatDate(start)} – ${formatDate(end)}`;
