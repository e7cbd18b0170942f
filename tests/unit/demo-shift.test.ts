import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { readDemo } from '../../src/db/demo/seed-demo';
import { daysBetween, shiftDemo, shiftInstant, shiftMonthDay, shiftWindow } from '../../src/db/demo/shift';
import { currentSeason } from '../../src/lib/field/time';

/*
 * The demo is written as if today were its anchor date and moved by the days since when it loads
 * (data/demo/README.md: "written as if today is 2026-12-01"). Every expected date below is counted
 * on the calendar by hand; leap years follow the Gregorian rule (2028 is one, 2026 and 2027 are not).
 */

describe('daysBetween', () => {
  it('given the anchor 2026-12-01 and the next day, it is 1; the day before is −1', () => {
    expect(daysBetween('2026-12-01', '2026-12-02')).toBe(1);
    expect(daysBetween('2026-12-02', '2026-12-01')).toBe(-1);
    expect(daysBetween('2026-12-01', '2026-12-01')).toBe(0);
  });
  it('given 2026-12-01 to 2027-03-31, it is 120 (30 + 31 + 28 + 31: December after the 1st, January, February 2027, March)', () => {
    expect(daysBetween('2026-12-01', '2027-03-31')).toBe(120);
  });
  it('given 2026-12-01 to 2028-02-29, it is 455 (365 to 2027-12-01, then 30 + 31 + 29)', () => {
    expect(daysBetween('2026-12-01', '2028-02-29')).toBe(455);
  });
  it('given 2026-12-01 to 2028-11-30, it is 730 (365 to 2027-12-01, then 366 to 2028-12-01 across the leap day, less one)', () => {
    expect(daysBetween('2026-12-01', '2028-11-30')).toBe(730);
  });
  it('given days across the New York DST changes (2026-03-08 and 2026-11-01, REFERENCES §6), it still counts whole calendar days', () => {
    expect(daysBetween('2026-03-07', '2026-03-09')).toBe(2);
    expect(daysBetween('2026-10-31', '2026-11-02')).toBe(2);
  });
});

describe('shiftMonthDay', () => {
  it("given '11-01' and one day, it is '11-02'", () => {
    expect(shiftMonthDay('11-01', 1, 2026)).toBe('11-02');
  });
  it("given '12-31' and one day, it is '01-01'", () => {
    expect(shiftMonthDay('12-31', 1, 2026)).toBe('01-01');
  });
  it("given '02-28' and one day in the anchor year 2026 (a common year), it is '03-01'; in 2028 (a leap year), '02-29'", () => {
    expect(shiftMonthDay('02-28', 1, 2026)).toBe('03-01');
    expect(shiftMonthDay('02-28', 1, 2028)).toBe('02-29');
  });
  it("given '12-01' in 2026 and 90 days, it is '03-01' (February 2027 has 28 days); 455 days, '02-29' (February 2028 has 29)", () => {
    expect(shiftMonthDay('12-01', 90, 2026)).toBe('03-01');
    expect(shiftMonthDay('12-01', 455, 2026)).toBe('02-29');
  });
  it("given '03-01' and one day back in 2026, it is '02-28'", () => {
    expect(shiftMonthDay('03-01', -1, 2026)).toBe('02-28');
  });
});

describe('shiftWindow', () => {
  it('given a window open all year (01-01 … 12-31), it stays open all year, whatever the shift', () => {
    for (const days of [1, 120, 455]) expect(shiftWindow({ start: '01-01', end: '12-31' }, days, 2026)).toEqual({ start: '01-01', end: '12-31' });
  });
  it('given a window of a season, it moves both ends: 07-01 … 09-30 by 1 day is 07-02 … 10-01', () => {
    expect(shiftWindow({ start: '07-01', end: '09-30' }, 1, 2026)).toEqual({ start: '07-02', end: '10-01' });
  });
});

describe('shiftInstant', () => {
  it('given noon UTC on 2026-10-31 and one day, it is 24 hours later, 2026-11-01T12:00Z, even across the New York autumn change (REFERENCES §6)', () => {
    expect(shiftInstant('2026-10-31T12:00:00.000Z', 1)).toBe('2026-11-01T12:00:00.000Z');
  });
  it('given 2026-04-02T14:00Z and 455 days, it is 2027-07-01T14:00Z (365 days to 2027-04-02, then 28 + 31 + 30 + 1)', () => {
    expect(shiftInstant('2026-04-02T14:00:00Z', 455)).toBe('2027-07-01T14:00:00.000Z');
  });
  it('given midnight UTC and one day back, it is the previous midnight', () => {
    expect(shiftInstant('2026-12-01T00:00:00.000Z', -1)).toBe('2026-11-30T00:00:00.000Z');
  });
});

describe('shiftDemo on the real demo (data/demo)', () => {
  const demo = readDemo(fileURLToPath(new URL('../../data', import.meta.url)));
  const allowanceOf = (d: typeof demo, parcelSlug: string, speciesSlug: string) => {
    const found = d.scenario.allowances.find((a) => a.parcelSlug === parcelSlug && a.speciesSlug === speciesSlug);
    if (!found) throw new Error(`the demo has no allowance of ${speciesSlug} on ${parcelSlug}`);
    return found;
  };

  it('given the demo, it is written as of 2026-12-01 (data/demo/README.md) and has visits to check', () => {
    expect(demo.scenario.writtenAsOf).toBe('2026-12-01');
    expect(demo.scenario.visits.length).toBeGreaterThan(0);
  });
  it('given a shift of 0 days, it returns the demo as it is', () => {
    expect(shiftDemo(demo, 0)).toBe(demo);
  });

  // The anchor moved by hand: 2026-12-01 + 1, + 120 (above), + 455 (29 February 2028), + 730.
  const shifts: [number, string][] = [[0, '2026-12-01'], [1, '2026-12-02'], [120, '2027-03-31'], [455, '2028-02-29'], [730, '2028-11-30']];
  for (const [days, today] of shifts) {
    describe(`moved by ${days} days`, () => {
      const moved = shiftDemo(demo, days);
      it(`given the anchor, it is ${today}`, () => {
        expect(moved.scenario.writtenAsOf).toBe(today);
      });
      it('given every demo visit, each of its entries is in season for its allowance on the visit day (the loader refuses one that is not)', () => {
        const outOfSeason = moved.scenario.visits.flatMap((v) =>
          v.entries.filter((e) => currentSeason(allowanceOf(moved, v.parcelSlug, e.speciesSlug).seasons, v.localDate) === null).map((e) => `${e.speciesSlug} on ${v.parcelSlug} on ${v.localDate}`));
        expect(outOfSeason).toEqual([]);
      });
      it('given every demo visit, its season occurrence is the one it had before, moved by the same days (the same story)', () => {
        const pairs = demo.scenario.visits.flatMap((v, i) => v.entries.map((e) => {
          const w = moved.scenario.visits[i];
          const before = currentSeason(allowanceOf(demo, v.parcelSlug, e.speciesSlug).seasons, v.localDate);
          const after = w ? currentSeason(allowanceOf(moved, w.parcelSlug, e.speciesSlug).seasons, w.localDate) : null;
          return [w && daysBetween(v.localDate, w.localDate), before && after && daysBetween(before.start, after.start), before && after && daysBetween(before.end, after.end)];
        }));
        expect(pairs).toEqual(pairs.map(() => [days, days, days]));
      });
      it('given every demo visit, a permit of its holder on its parcel is still in force that day (the loader needs one)', () => {
        const held = moved.scenario.permits.filter((p) => ['active', 'expired'].includes(p.state));
        const without = moved.scenario.visits.filter((v) => !held.some((p) => p.parcelSlug === v.parcelSlug && (p.holderClub ?? p.holderEmail) === (v.holderClub ?? v.foragerEmail)
          && p.startsOn <= v.localDate && v.localDate <= p.endsOn));
        expect(without).toEqual([]);
      });
    });
  }

  it('given any day the demo may be loaded over a whole leap cycle (shifts of 0 … 1460 days, so every 29 February position), every visit stays in season', () => {
    const failures: string[] = [];
    for (let days = 0; days <= 1460; days += 1) {
      const moved = shiftDemo(demo, days);
      for (const v of moved.scenario.visits) {
        for (const e of v.entries) {
          if (currentSeason(allowanceOf(moved, v.parcelSlug, e.speciesSlug).seasons, v.localDate) === null) failures.push(`+${days}: ${e.speciesSlug} on ${v.localDate}`);
        }
      }
    }
    expect(failures).toEqual([]);
  });
  it('given a shift, the demo read from disk is left as it was', () => {
    const visitDays = demo.scenario.visits.map((v) => v.localDate);
    shiftDemo(demo, 455);
    expect(demo.scenario.writtenAsOf).toBe('2026-12-01');
    expect(demo.scenario.visits.map((v) => v.localDate)).toEqual(visitDays);
  });
});
