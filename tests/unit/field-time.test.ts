import { describe, expect, it } from 'vitest';
import { addDays, addYears, closuresOn, currentSeason, endOfLocalDay, localDateAt, localWallClock, seasonAsOf, startOfLocalDay } from '../../src/lib/field/time';

const at = (iso: string) => new Date(iso);
const hours = (a: Date, b: Date) => (b.getTime() - a.getTime()) / 3_600_000;

/*
 * REFERENCES §6: US DST begins at 2:00 local on the second Sunday of March and ends on the first
 * Sunday of November (15 U.S.C. 260a ✔); EU DST changes at 01:00 UTC on the last Sundays of March
 * and October (Directive 2000/84/EC ✔); the 2026 transition instants are ⚙ (Node's ICU tz data).
 * The offsets either side follow from those: New York 2:00 EST = 07:00Z, so EST is UTC−5, EDT UTC−4;
 * Chicago 2:00 CST = 08:00Z, so CST is UTC−6, CDT UTC−5; London GMT+0, BST+1.
 */
describe('the 2026 DST transitions (REFERENCES §6)', () => {
  const cases: [string, string, string, [string, string], [string, string]][] = [
    ['America/New_York', 'spring', '2026-03-08T07:00:00Z', ['2026-03-08', '01:59:59'], ['2026-03-08', '03:00:00']],
    ['America/New_York', 'autumn', '2026-11-01T06:00:00Z', ['2026-11-01', '01:59:59'], ['2026-11-01', '01:00:00']],
    ['America/Chicago', 'spring', '2026-03-08T08:00:00Z', ['2026-03-08', '01:59:59'], ['2026-03-08', '03:00:00']],
    ['America/Chicago', 'autumn', '2026-11-01T07:00:00Z', ['2026-11-01', '01:59:59'], ['2026-11-01', '01:00:00']],
    ['Europe/London', 'spring', '2026-03-29T01:00:00Z', ['2026-03-29', '00:59:59'], ['2026-03-29', '02:00:00']],
    ['Europe/London', 'autumn', '2026-10-25T01:00:00Z', ['2026-10-25', '01:59:59'], ['2026-10-25', '01:00:00']],
  ];
  for (const [zone, season, instant, before, after] of cases) {
    it(`given the ${season} change in ${zone} at ${instant}, it reads the wall clock either side of the instant`, () => {
      const t = at(instant).getTime();
      expect(localWallClock(new Date(t - 1000), zone)).toEqual({ date: before[0], time: before[1] });
      expect(localWallClock(new Date(t), zone)).toEqual({ date: after[0], time: after[1] });
    });
  }

  it('given the local midnights around the New York spring change, it moves the local date at 05:00Z before and 04:00Z after', () => {
    expect(localDateAt(at('2026-03-08T04:59:59Z'), 'America/New_York')).toBe('2026-03-07');
    expect(localDateAt(at('2026-03-08T05:00:00Z'), 'America/New_York')).toBe('2026-03-08');
    expect(localDateAt(at('2026-03-09T03:59:59Z'), 'America/New_York')).toBe('2026-03-08');
    expect(localDateAt(at('2026-03-09T04:00:00Z'), 'America/New_York')).toBe('2026-03-09');
  });
  it('given the local midnights around the London autumn change, it moves the date at 23:00Z (BST) then 00:00Z (GMT)', () => {
    expect(localDateAt(at('2026-10-24T22:59:59Z'), 'Europe/London')).toBe('2026-10-24');
    expect(localDateAt(at('2026-10-24T23:00:00Z'), 'Europe/London')).toBe('2026-10-25');
    expect(localDateAt(at('2026-10-25T23:59:59Z'), 'Europe/London')).toBe('2026-10-25');
    expect(localDateAt(at('2026-10-26T00:00:00Z'), 'Europe/London')).toBe('2026-10-26');
  });
  it('given America/Phoenix, which has no transition (REFERENCES §6), it keeps one offset, UTC−7 (from memory), across the US change days', () => {
    expect(localWallClock(at('2026-03-08T09:00:00Z'), 'America/Phoenix')).toEqual({ date: '2026-03-08', time: '02:00:00' });
    expect(localWallClock(at('2026-11-01T09:00:00Z'), 'America/Phoenix')).toEqual({ date: '2026-11-01', time: '02:00:00' });
    expect(localWallClock(at('2026-07-01T06:59:59Z'), 'America/Phoenix')).toEqual({ date: '2026-06-30', time: '23:59:59' });
  });
  it('given a season opening 2026-09-01 00:00 in New York, that day begins at 2026-09-01T04:00Z (REFERENCES §6)', () => {
    expect(startOfLocalDay('2026-09-01', 'America/New_York').toISOString()).toBe('2026-09-01T04:00:00.000Z');
  });
});

describe('the local day boundary', () => {
  it('given 2026-12-01T02:00Z, it is still 30 Nov in New York (21:00 EST) but already 1 Dec in London (02:00 GMT)', () => {
    expect(localDateAt(at('2026-12-01T02:00:00Z'), 'America/New_York')).toBe('2026-11-30');
    expect(localDateAt(at('2026-12-01T02:00:00Z'), 'Europe/London')).toBe('2026-12-01');
  });
  it('given an unknown zone, it throws RangeError (ECMA-402)', () => {
    expect(() => localDateAt(at('2026-12-01T02:00:00Z'), 'America/Nowhere')).toThrow(RangeError);
  });
});

describe('endOfLocalDay', () => {
  it('given 2026-03-08 in New York (the spring change), the day runs 05:00Z to 04:00Z next day: 23 hours', () => {
    const end = endOfLocalDay('2026-03-08', 'America/New_York');
    expect(end.toISOString()).toBe('2026-03-09T04:00:00.000Z');
    expect(hours(startOfLocalDay('2026-03-08', 'America/New_York'), end)).toBe(23);
  });
  it('given 2026-11-01 in New York (the autumn change), the day runs 04:00Z to 05:00Z next day: 25 hours', () => {
    const end = endOfLocalDay('2026-11-01', 'America/New_York');
    expect(end.toISOString()).toBe('2026-11-02T05:00:00.000Z');
    expect(hours(startOfLocalDay('2026-11-01', 'America/New_York'), end)).toBe(25);
  });
  it('given 2026-03-29 in London, the day is 23 hours and ends at 23:00Z', () => {
    expect(endOfLocalDay('2026-03-29', 'Europe/London').toISOString()).toBe('2026-03-29T23:00:00.000Z');
    expect(hours(startOfLocalDay('2026-03-29', 'Europe/London'), endOfLocalDay('2026-03-29', 'Europe/London'))).toBe(23);
  });
  it('given an ordinary day in Phoenix, it is 24 hours and ends at 07:00Z', () => {
    expect(endOfLocalDay('2026-03-08', 'America/Phoenix').toISOString()).toBe('2026-03-09T07:00:00.000Z');
  });
  it('given a zone that changes clocks at midnight, the end is still the first instant of the next date (an invariant, every day of 2026)', () => {
    for (const zone of ['America/Santiago', 'America/Havana', 'Asia/Tehran', 'Australia/Lord_Howe']) {
      for (let day = '2026-01-01'; day < '2027-01-01'; day = addDays(day, 1)) {
        const end = endOfLocalDay(day, zone);
        expect(localDateAt(end, zone), `${zone} ${day}`).toBe(addDays(day, 1));
        expect(localDateAt(new Date(end.getTime() - 1), zone), `${zone} ${day}`).toBe(day);
      }
    }
  });
  it('given a malformed date, it throws RangeError', () => {
    expect(() => endOfLocalDay('2026-02-30', 'America/New_York')).toThrow(RangeError);
  });
});

describe('currentSeason', () => {
  const chaga = [{ start: '11-01', end: '03-15' }];
  it('given 11-01..03-15 on 2027-02-10, it is the occurrence 2026-11-01..2027-03-15 (crosses New Year)', () => {
    expect(currentSeason(chaga, '2027-02-10')).toEqual({ start: '2026-11-01', end: '2027-03-15' });
  });
  it('given the same window on 2026-12-25, it is 2026-11-01..2027-03-15', () => {
    expect(currentSeason(chaga, '2026-12-25')).toEqual({ start: '2026-11-01', end: '2027-03-15' });
  });
  it('given the same window on its first and last days, both ends are included', () => {
    expect(currentSeason(chaga, '2026-11-01')).toEqual({ start: '2026-11-01', end: '2027-03-15' });
    expect(currentSeason(chaga, '2027-03-15')).toEqual({ start: '2026-11-01', end: '2027-03-15' });
  });
  it('given a day between, it is out of season', () => {
    expect(currentSeason(chaga, '2027-03-16')).toBeNull();
    expect(currentSeason(chaga, '2026-10-31')).toBeNull();
  });
  it('given American ginseng in Pennsylvania, 1 Sept–30 Nov (REFERENCES §7 ◐), it holds 2026-09-01 and not 2026-12-01', () => {
    expect(currentSeason([{ start: '09-01', end: '11-30' }], '2026-09-01')).toEqual({ start: '2026-09-01', end: '2026-11-30' });
    expect(currentSeason([{ start: '09-01', end: '11-30' }], '2026-12-01')).toBeNull();
  });
  it('given a window ending 02-29, in a common year it ends on 02-28 and in a leap year on 02-29', () => {
    const window = [{ start: '12-01', end: '02-29' }];
    expect(currentSeason(window, '2027-02-28')).toEqual({ start: '2026-12-01', end: '2027-02-28' });
    expect(currentSeason(window, '2027-03-01')).toBeNull();
    expect(currentSeason(window, '2028-02-29')).toEqual({ start: '2027-12-01', end: '2028-02-29' });
  });
  it('given a window starting 02-29, in a common year it starts on 03-01', () => {
    const window = [{ start: '02-29', end: '04-30' }];
    expect(currentSeason(window, '2027-02-28')).toBeNull();
    expect(currentSeason(window, '2027-03-01')).toEqual({ start: '2027-03-01', end: '2027-04-30' });
    expect(currentSeason(window, '2028-02-29')).toEqual({ start: '2028-02-29', end: '2028-04-30' });
  });
  it('given two windows, it finds the one holding the date, and joins overlapping ones', () => {
    const spring = { start: '04-15', end: '05-31' };
    const autumn = { start: '09-01', end: '10-31' };
    expect(currentSeason([spring, autumn], '2026-09-10')).toEqual({ start: '2026-09-01', end: '2026-10-31' });
    expect(currentSeason([spring, { start: '05-15', end: '06-30' }], '2026-05-20')).toEqual({ start: '2026-04-15', end: '2026-06-30' });
  });
  it('given overlapping windows 04-15…06-30 and 06-01…07-31, every day of either is in one season 04-15…07-31, not only the days they share', () => {
    // Before, only the windows holding the day were joined: 05-01 read 04-15…06-30 and 07-15 read 06-01…07-31,
    // so one continuous open period split into three "seasons" and a per-season limit restarted inside it.
    const windows = [{ start: '04-15', end: '06-30' }, { start: '06-01', end: '07-31' }];
    for (const day of ['2026-04-15', '2026-05-01', '2026-06-15', '2026-07-15', '2026-07-31']) {
      expect(currentSeason(windows, day)).toEqual({ start: '2026-04-15', end: '2026-07-31' });
    }
    expect(currentSeason(windows, '2026-08-01')).toBeNull();
  });
  it('given windows that meet (05-31 then 06-01), they are one season; a gap of a day keeps two', () => {
    expect(currentSeason([{ start: '04-15', end: '05-31' }, { start: '06-01', end: '07-31' }], '2026-05-01')).toEqual({ start: '2026-04-15', end: '2026-07-31' });
    expect(currentSeason([{ start: '04-15', end: '05-30' }, { start: '06-01', end: '07-31' }], '2026-05-01')).toEqual({ start: '2026-04-15', end: '2026-05-30' });
  });
  it('given one window all year (01-01…12-31), each calendar year is its own season: it never runs into its own next year', () => {
    expect(currentSeason([{ start: '01-01', end: '12-31' }], '2026-06-01')).toEqual({ start: '2026-01-01', end: '2026-12-31' });
    expect(currentSeason([{ start: '01-01', end: '12-31' }], '2025-12-31')).toEqual({ start: '2025-01-01', end: '2025-12-31' });
    expect(currentSeason([{ start: '11-01', end: '10-31' }], '2026-06-01')).toEqual({ start: '2025-11-01', end: '2026-10-31' });
  });
  it('given two windows that together cover the year (01-01…06-30, 07-01…12-31), the season is a year from the first one\'s start', () => {
    const windows = [{ start: '01-01', end: '06-30' }, { start: '07-01', end: '12-31' }];
    expect(currentSeason(windows, '2026-09-01')).toEqual({ start: '2026-01-01', end: '2026-12-31' });
    expect(seasonAsOf(windows, '2027-01-01')).toEqual({ start: '2027-01-01', end: '2027-12-31' });
  });
  it('given a window across New Year overlapping one in spring (11-01…03-15 and 03-01…04-30), the season runs 2026-11-01…2027-04-30', () => {
    const windows = [{ start: '11-01', end: '03-15' }, { start: '03-01', end: '04-30' }];
    expect(currentSeason(windows, '2026-12-01')).toEqual({ start: '2026-11-01', end: '2027-04-30' });
    expect(currentSeason(windows, '2027-04-20')).toEqual({ start: '2026-11-01', end: '2027-04-30' });
  });
  it('given no windows, it is never in season', () => {
    expect(currentSeason([], '2026-06-01')).toBeNull();
  });
  it('given a malformed window, it throws RangeError', () => {
    expect(() => currentSeason([{ start: '13-01', end: '02-01' }], '2026-06-01')).toThrow(RangeError);
  });
});

describe('closuresOn', () => {
  const closures = [
    { startsOn: '2026-11-14', endsOn: '2026-11-29', reason: 'Rifle deer season' },
    { startsOn: '2026-12-05', endsOn: '2026-12-13', reason: 'Muzzleloader deer season' },
  ];
  it('given a date inside a closure (ends included), it returns that closure', () => {
    expect(closuresOn(closures, '2026-11-14').map((c) => c.reason)).toEqual(['Rifle deer season']);
    expect(closuresOn(closures, '2026-11-29').map((c) => c.reason)).toEqual(['Rifle deer season']);
  });
  it('given a date between closures, it returns none', () => {
    expect(closuresOn(closures, '2026-12-01')).toEqual([]);
  });
  it('given overlapping closures, it returns every one', () => {
    expect(closuresOn([...closures, { startsOn: '2026-12-01', endsOn: '2026-12-31', reason: 'Logging' }], '2026-12-06')).toHaveLength(2);
  });
});

describe('addYears', () => {
  // Gregorian rule: a leap year is divisible by 4, except centuries not divisible by 400 (2028, 2032,
  // 2000 and 2400 are leap years; 2027, 2029 and 2100 are not).
  it('given 2026-12-02 and one year, it is 2027-12-02', () => {
    expect(addYears('2026-12-02', 1)).toBe('2027-12-02');
  });
  it('given 29 February 2028 and one year, it is 2029-02-28: 2029 is a common year, so the last day of its February', () => {
    expect(addYears('2028-02-29', 1)).toBe('2029-02-28');
  });
  it('given 2027-02-28 and one year, it is 2028-02-28 (not the leap day)', () => {
    expect(addYears('2027-02-28', 1)).toBe('2028-02-28');
  });
  it('given 29 February 2028 and four years, it is 2032-02-29 (2032 is a leap year)', () => {
    expect(addYears('2028-02-29', 4)).toBe('2032-02-29');
  });
  it('given 29 February 2096 and four years, it is 2100-02-28 (2100 is a century not divisible by 400); from 2000-02-29, 400 years is 2400-02-29', () => {
    expect(addYears('2096-02-29', 4)).toBe('2100-02-28');
    expect(addYears('2000-02-29', 400)).toBe('2400-02-29');
  });
  it('given a negative number of years, it goes back: 2028-02-29 − 1 is 2027-02-28, 2027-03-01 − 1 is 2026-03-01', () => {
    expect(addYears('2028-02-29', -1)).toBe('2027-02-28');
    expect(addYears('2027-03-01', -1)).toBe('2026-03-01');
  });
  it('given the last day of another month, it keeps it (2026-12-31 + 1 = 2027-12-31; 2026-04-30 + 2 = 2028-04-30)', () => {
    expect(addYears('2026-12-31', 1)).toBe('2027-12-31');
    expect(addYears('2026-04-30', 2)).toBe('2028-04-30');
  });
  it('given a date that does not exist, it throws RangeError', () => {
    expect(() => addYears('2027-02-29', 1)).toThrow(RangeError);
  });
});
