import { inSeason, type SeasonWindow } from '../seasons';

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

/** The occurrence of one yearly window that holds a local date, or null. */
function occurrenceOf(window: SeasonWindow, localDate: string): { start: string; end: string } | null {
  checkMonthDay(window.start);
  checkMonthDay(window.end);
  const [year] = parseIsoDate(localDate);
  if (!inSeason(window, localDate)) return null;
  if (window.start <= window.end) return { start: occurrenceDay(year, window.start, 'start'), end: occurrenceDay(year, window.end, 'end') };
  // Crosses New Year: 11-01 … 03-15 holds 2026-12-25 (→ 2027-03-15) and 2027-02-10 (from 2026-11-01).
  return localDate.slice(5) >= window.start
    ? { start: occurrenceDay(year, window.start, 'start'), end: occurrenceDay(year + 1, window.end, 'end') }
    : { start: occurrenceDay(year - 1, window.start, 'start'), end: occurrenceDay(year, window.end, 'end') };
}

/**
 * The season occurrence (both ends included) holding a local date, or null when the species is out
 * of season. Windows recur every year and may cross New Year. When several windows hold the date
 * (overlapping windows), their occurrences are joined: from the earliest start to the latest end.
 */
export function currentSeason(windows: SeasonWindow[], localDate: string): { start: string; end: string } | null {
  const holding = windows.map((w) => occurrenceOf(w, localDate)).filter((o): o is { start: string; end: string } => o !== null);
  if (holding.length === 0) return null;
  return {
    start: holding.map((o) => o.start).reduce((x, y) => (y < x ? y : x)),
    end: holding.map((o) => o.end).reduce((x, y) => (y > x ? y : x)),
  };
}

/**
 * The season an audit or a season report covers on a local date: the occurrence in progress (as
 * `currentSeason` joins it), or else the most recent one that has ended; null with no windows.
 * A window's occurrence that starts later in the same year is not yet a season to report.
 */
export function seasonAsOf(windows: SeasonWindow[], localDate: string): { start: string; end: string } | null {
  const current = currentSeason(windows, localDate);
  if (current) return current;
  const [year] = parseIsoDate(localDate);
  let latest: { start: string; end: string } | null = null;
  for (const w of windows) {
    checkMonthDay(w.start);
    checkMonthDay(w.end);
    for (const startYear of [year, year - 1, year - 2]) {
      const endYear = w.start <= w.end ? startYear : startYear + 1;
      const occurrence = { start: occurrenceDay(startYear, w.start, 'start'), end: occurrenceDay(endYear, w.end, 'end') };
      if (occurrence.end < localDate) {
        if (!latest || occurrence.end > latest.end) latest = occurrence;
        break;
      }
    }
  }
  return latest;
}

/** Every closure whose date range (both ends included) holds a local date. */
export function closuresOn<C extends { startsOn: string; endsOn: string }>(closures: C[], localDate: string): C[] {
  parseIsoDate(localDate);
  return closures.filter((c) => c.startsOn <= localDate && localDate <= c.endsOn);
}
