import type { SeasonWindow } from '../seasons';

/**
 * Parcel-local calendar time. Offsets come from the runtime's IANA tz data through Intl
 * (ECMA-402), never from a fixed UTC offset, so DST days come out 23 or 25 hours long as they are
 * (US: 15 U.S.C. 260a; EU: Directive 2000/84/EC). An unknown zone throws RangeError (ECMA-402).
 */

const formatters = new Map<string, Intl.DateTimeFormat>();
function formatter(timeZone: string): Intl.DateTimeFormat {
  let format = formatters.get(timeZone);
  if (!format) {
    format = new Intl.DateTimeFormat('en-US', {
      timeZone, hourCycle: 'h23', year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit', second: '2-digit',
    });
    formatters.set(timeZone, format);
  }
  return format;
}

/**
 * The last answer per zone, by exact instant: one check-in asks about the same instant many times,
 * and formatToParts is the slow part of the verdict.
 */
const lastWallClock = new Map<string, { ms: number; wall: { date: string; time: string } }>();

/** The wall clock at an instant in a zone: { date: 'YYYY-MM-DD', time: 'HH:MM:SS' }. */
export function localWallClock(instant: Date, timeZone: string): { date: string; time: string } {
  const ms = instant.getTime();
  if (Number.isNaN(ms)) throw new RangeError('not a valid instant');
  const last = lastWallClock.get(timeZone);
  if (last && last.ms === ms) return { ...last.wall };
  const parts: Record<string, string> = {};
  for (const { type, value } of formatter(timeZone).formatToParts(instant)) parts[type] = value;
  const year = (parts.year ?? '').padStart(4, '0');
  const wall = { date: `${year}-${parts.month}-${parts.day}`, time: `${parts.hour}:${parts.minute}:${parts.second}` };
  lastWallClock.set(timeZone, { ms, wall });
  return { ...wall };
}

/** The parcel-local calendar date ('YYYY-MM-DD') of an instant in an IANA time zone. */
export function localDateAt(instant: Date, timeZone: string): string {
  return localWallClock(instant, timeZone).date;
}

const isoDatePattern = /^(\d{4})-(\d{2})-(\d{2})$/;
function parseIsoDate(isoDate: string): [number, number, number] {
  const match = isoDatePattern.exec(isoDate);
  const [y, m, d] = match ? [Number(match[1]), Number(match[2]), Number(match[3])] : [0, 0, 0];
  const check = new Date(Date.UTC(y, m - 1, d));
  if (!match || check.getUTCMonth() !== m - 1 || check.getUTCDate() !== d) throw new RangeError(`not a calendar date (YYYY-MM-DD): ${isoDate}`);
  return [y, m, d];
}

/** A calendar date moved by whole days ('2026-12-31' + 1 → '2027-01-01'). */
export function addDays(isoDate: string, days: number): string {
  const [y, m, d] = parseIsoDate(isoDate);
  return new Date(Date.UTC(y, m - 1, d + days)).toISOString().slice(0, 10);
}

/**
 * The same calendar date `years` later: 29 February lands on 28 February in a common year (a
 * year-long permit from 2028-02-29 runs to 2029-02-28), never on a date that does not exist.
 */
export function addYears(isoDate: string, years: number): string {
  const [y, m, d] = parseIsoDate(isoDate);
  const year = y + years;
  const last = new Date(Date.UTC(year, m, 0)).getUTCDate();
  return `${String(year).padStart(4, '0')}-${String(m).padStart(2, '0')}-${String(Math.min(d, last)).padStart(2, '0')}`;
}

const hour = 3_600_000;

/**
 * The instant a local date begins, so that consecutive days tile time with no gap or overlap
 * (startOfLocalDay(d + 1) = endOfLocalDay(d)). Usually local midnight. Where a zone skips midnight
 * (Cuba's and Chile's spring changes at 00:00) it is the first instant that wears the date, 01:00;
 * where a zone repeats the hour before midnight (Chile's autumn change) it is the second midnight,
 * when the previous date is over for good. Found from the zone's offset and checked; when the check
 * fails, by bisection between bounds that no offset (UTC−12 … UTC+14) can escape.
 */
export function startOfLocalDay(localDate: string, timeZone: string): Date {
  const [y, m, d] = parseIsoDate(localDate);
  const midnightUtc = Date.UTC(y, m - 1, d);
  const offsetAt = (t: number) => {
    const { date, time } = localWallClock(new Date(t), timeZone);
    const [hh, mm, ss] = time.split(':').map(Number);
    const [yy, mo, dd] = parseIsoDate(date);
    return Date.UTC(yy, mo - 1, dd, hh, mm, ss) - Math.floor(t / 1000) * 1000;
  };
  const isFirst = (t: number) => localDateAt(new Date(t), timeZone) === localDate && localDateAt(new Date(t - 1), timeZone) < localDate;
  const guess = midnightUtc - offsetAt(midnightUtc - offsetAt(midnightUtc));
  if (isFirst(guess)) return new Date(guess);
  let [lo, hi] = [midnightUtc - 15 * hour, midnightUtc + 15 * hour]; // lo wears an earlier date, hi this one or later
  while (hi - lo > 1) {
    const mid = Math.floor((lo + hi) / 2);
    if (localDateAt(new Date(mid), timeZone) < localDate) lo = mid;
    else hi = mid;
  }
  return new Date(hi);
}

/**
 * The instant at which a local date ends: the first instant of the next local date (exclusive).
 * A visit still open then is closed by the system. 2026-03-08 in America/New_York ends 23 hours
 * after it began; 2026-11-01 there, 25 hours.
 */
export function endOfLocalDay(localDate: string, timeZone: string): Date {
  return startOfLocalDay(addDays(localDate, 1), timeZone);
}

const monthDayPattern = /^(\d{2})-(\d{2})$/;
function checkMonthDay(monthDay: string) {
  const match = monthDayPattern.exec(monthDay);
  const [m, d] = match ? [Number(match[1]), Number(match[2])] : [0, 0];
  const days = [31, 29, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31][m - 1];
  if (!match || !days || d < 1 || d > days) throw new RangeError(`not a month and day (MM-DD): ${monthDay}`);
}

const isLeap = (year: number) => (year % 4 === 0 && year % 100 !== 0) || year % 400 === 0;

/**
 * A window end in a given year. Feb 29 in a common year: a window that ends on 02-29 ends on the
 * last day of February (02-28); one that starts on 02-29 starts on 03-01. This is exactly what the
 * month-day comparison of `inSeason` does, so the occurrence and the test always agree.
 */
function occurrenceDay(year: number, monthDay: string, end: 'start' | 'end'): string {
  const y = String(year).padStart(4, '0');
  if (monthDay === '02-29' && !isLeap(year)) return end === 'end' ? `${y}-02-28` : `${y}-03-01`;
  return `${y}-${monthDay}`;
}

type Occurrence = { start: string; end: string };

/** A month-day's place in a leap year, 1…366 (02-29 is 60), and back. */
const leapYearStart = Date.UTC(2028, 0, 1);
const placeOf = (monthDay: string) => Math.round((Date.parse(`2028-${monthDay}T00:00:00Z`) - leapYearStart) / 86_400_000) + 1;
const monthDayAt = (place: number) => new Date(leapYearStart + (place - 1) * 86_400_000).toISOString().slice(5, 10);

/**
 * A species' windows as its seasons: windows that overlap or meet on the yearly calendar are one
 * season (04-15…06-30 with 06-01…07-31 is 04-15…07-31; 04-15…05-31 with 06-01…07-31 too), so a
 * forager's season never restarts inside one continuous open period. Windows that cover the whole
 * year are one season a year long, from the first window's start.
 */
function seasonWindows(windows: SeasonWindow[]): readonly SeasonWindow[] {
  const key = windows.map((w) => `${w.start}/${w.end}`).join(' ');
  let seasons = seasonsByWindows.get(key);
  if (!seasons) {
    seasons = Object.freeze(mergedWindows(windows));
    // Allowances share few distinct window sets; a bound keeps a long-running process from collecting them all.
    if (seasonsByWindows.size >= 1000) seasonsByWindows.clear();
    seasonsByWindows.set(key, seasons);
  }
  return seasons;
}

/** seasonWindows' answers by the windows they were made from: a check-in asks for the same few again and again. */
const seasonsByWindows = new Map<string, readonly SeasonWindow[]>();

function mergedWindows(windows: SeasonWindow[]): SeasonWindow[] {
  const covered = Array.from({ length: 367 }, () => false);
  for (const w of windows) {
    checkMonthDay(w.start);
    checkMonthDay(w.end);
    const [from, to] = [placeOf(w.start), placeOf(w.end)];
    for (let p = 1; p <= 366; p += 1) if (from <= to ? p >= from && p <= to : p >= from || p <= to) covered[p] = true;
  }
  const first = windows[0];
  if (!first) return [];
  const before = (p: number) => (p === 1 ? 366 : p - 1);
  const starts = Array.from({ length: 366 }, (_, i) => i + 1).filter((p) => covered[p] && !covered[before(p)]);
  if (starts.length === 0) return [{ start: first.start, end: monthDayAt(before(placeOf(first.start))) }];
  return starts.map((start) => {
    let end = start;
    while (covered[end === 366 ? 1 : end + 1]) end = end === 366 ? 1 : end + 1;
    return { start: monthDayAt(start), end: monthDayAt(end) };
  });
}

/** Every occurrence of one season that starts in the given years (one crossing New Year ends the year after). */
function occurrencesOf(window: SeasonWindow, years: number[]): Occurrence[] {
  const crosses = window.start > window.end;
  return years
    .map((y) => ({ start: occurrenceDay(y, window.start, 'start'), end: occurrenceDay(crosses ? y + 1 : y, window.end, 'end') }))
    // A season of 29 February alone has no day in a common year.
    .filter((o) => o.start <= o.end);
}

/** The season occurrences around a local date, from two years before to one after, in order. */
function seasonsAround(windows: SeasonWindow[], localDate: string): Occurrence[] {
  const [year] = parseIsoDate(localDate);
  return seasonWindows(windows)
    .flatMap((w) => occurrencesOf(w, [year - 2, year - 1, year, year + 1]))
    .sort((a, b) => (a.start < b.start ? -1 : a.start > b.start ? 1 : 0));
}

/**
 * The season occurrence (both ends included) holding a local date, or null when the species is out
 * of season. Windows recur every year and may cross New Year. Overlapping or meeting windows make
 * one season (`seasonWindows`): 04-15…06-30 with 06-01…07-31 is 04-15…07-31 on any day of it, not
 * only where they overlap; one window never runs into its own next year.
 */
export function currentSeason(windows: SeasonWindow[], localDate: string): { start: string; end: string } | null {
  return seasonsAround(windows, localDate).find((o) => o.start <= localDate && localDate <= o.end) ?? null;
}

/**
 * The season an audit or a season report covers on a local date: the occurrence in progress, or else
 * the most recent one that has ended; null with no windows. One that starts later is not yet a
 * season to report.
 */
export function seasonAsOf(windows: SeasonWindow[], localDate: string): { start: string; end: string } | null {
  const seasons = seasonsAround(windows, localDate);
  return seasons.find((o) => o.start <= localDate && localDate <= o.end) ?? seasons.filter((o) => o.end < localDate).at(-1) ?? null;
}

/** Every closure whose date range (both ends included) holds a local date. */
export function closuresOn<C extends { startsOn: string; endsOn: string }>(closures: C[], localDate: string): C[] {
  parseIsoDate(localDate);
  return closures.filter((c) => c.startsOn <= localDate && localDate <= c.endsOn);
}

/**
 * Every season occurrence that opens or closes within local dates `from` … `until` (both included),
 * in order of opening: what a calendar of the coming months shows. `until` at most a year after `from`.
 */
export function seasonOccurrencesBetween(windows: SeasonWindow[], from: string, until: string): { start: string; end: string }[] {
  parseIsoDate(until);
  return seasonsAround(windows, from).filter((o) => (from <= o.start && o.start <= until) || (from <= o.end && o.end <= until));
}
