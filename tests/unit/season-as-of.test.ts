import { describe, expect, it } from 'vitest';
import { flagFor } from '../../src/lib/field/counting';
import { seasonAsOf } from '../../src/lib/field/time';
import type { LimitScope, Tally, TallyState } from '../../src/lib/field/types';

/*
 * A season is a yearly window, month-day to month-day, both ends included; a window whose end comes
 * before its start crosses New Year (GLOSSARY.md "season"; data/demo/README.md, chaga 11-01 … 03-15).
 * Every expected occurrence below is read off the calendar by hand. Leap years follow the Gregorian
 * rule (divisible by 4, except centuries not divisible by 400): 2028 is a leap year, 2027 is not.
 */
describe('seasonAsOf: a date inside a window', () => {
  it('given a window 04-01 … 06-30 and 2026-05-15, it returns 2026-04-01 … 2026-06-30', () => {
    expect(seasonAsOf([{ start: '04-01', end: '06-30' }], '2026-05-15')).toEqual({ start: '2026-04-01', end: '2026-06-30' });
  });

  it('given a window 11-01 … 03-15 and 2026-12-25, it returns the occurrence that ends next year, 2026-11-01 … 2027-03-15', () => {
    expect(seasonAsOf([{ start: '11-01', end: '03-15' }], '2026-12-25')).toEqual({ start: '2026-11-01', end: '2027-03-15' });
  });

  it('given a window 11-01 … 03-15 and 2027-02-10, it returns the occurrence that began last year, 2026-11-01 … 2027-03-15', () => {
    expect(seasonAsOf([{ start: '11-01', end: '03-15' }], '2027-02-10')).toEqual({ start: '2026-11-01', end: '2027-03-15' });
  });

  it('given a window 11-01 … 03-15, it counts both ends as in season (2026-11-01 and 2027-03-15)', () => {
    expect(seasonAsOf([{ start: '11-01', end: '03-15' }], '2026-11-01')).toEqual({ start: '2026-11-01', end: '2027-03-15' });
    expect(seasonAsOf([{ start: '11-01', end: '03-15' }], '2027-03-15')).toEqual({ start: '2026-11-01', end: '2027-03-15' });
  });

  it('given a window 12-01 … 02-29, it ends on 02-28 in a common year (2027) and on 02-29 in a leap year (2028)', () => {
    expect(seasonAsOf([{ start: '12-01', end: '02-29' }], '2027-01-15')).toEqual({ start: '2026-12-01', end: '2027-02-28' });
    expect(seasonAsOf([{ start: '12-01', end: '02-29' }], '2028-01-15')).toEqual({ start: '2027-12-01', end: '2028-02-29' });
  });
});

describe('seasonAsOf: a date outside every window', () => {
  it('given a window 04-01 … 06-30 and 2026-08-10, after it ended, it returns the occurrence just ended, 2026-04-01 … 2026-06-30', () => {
    expect(seasonAsOf([{ start: '04-01', end: '06-30' }], '2026-08-10')).toEqual({ start: '2026-04-01', end: '2026-06-30' });
  });

  it("given a window 04-01 … 06-30 and 2026-02-01, before this year's opens, it returns last year's, 2025-04-01 … 2025-06-30", () => {
    expect(seasonAsOf([{ start: '04-01', end: '06-30' }], '2026-02-01')).toEqual({ start: '2025-04-01', end: '2025-06-30' });
  });

  it('given a window 04-01 … 06-30 and 2026-07-01, the day after it closed, it returns 2026-04-01 … 2026-06-30', () => {
    expect(seasonAsOf([{ start: '04-01', end: '06-30' }], '2026-07-01')).toEqual({ start: '2026-04-01', end: '2026-06-30' });
  });

  it('given a window 11-01 … 03-15 and 2026-08-10, it returns the winter just ended, 2025-11-01 … 2026-03-15', () => {
    expect(seasonAsOf([{ start: '11-01', end: '03-15' }], '2026-08-10')).toEqual({ start: '2025-11-01', end: '2026-03-15' });
  });

  it('given two windows (04-15 … 06-30 and 09-15 … 12-15), it returns the one that ended last', () => {
    const windows = [{ start: '04-15', end: '06-30' }, { start: '09-15', end: '12-15' }];
    // 2026-08-01: spring 2026 ended on 06-30; autumn 2025 ended on 2025-12-15, earlier.
    expect(seasonAsOf(windows, '2026-08-01')).toEqual({ start: '2026-04-15', end: '2026-06-30' });
    // 2026-02-01: autumn 2025 (ended 2025-12-15) is later than spring 2025 (ended 2025-06-30).
    expect(seasonAsOf(windows, '2026-02-01')).toEqual({ start: '2025-09-15', end: '2025-12-15' });
  });

  it('given no windows, it returns null', () => {
    expect(seasonAsOf([], '2026-08-10')).toBeNull();
  });
});

/*
 * flagFor(before, after, breach): the tallies before and after an entry. The states are worked by
 * hand from GLOSSARY.md "tally states": nearing at or past the threshold (80 % here), reached at
 * exactly 100 %, over past it. Limits in kg; used in kg; percent = used / limit × 100.
 */
const tally = (scope: LimitScope, used: string, limitKg: string, percent: number, state: TallyState): Tally => ({
  scope, measure: 'mass', limit: { quantity: limitKg, unit: 'kg', fromPermit: false }, used, remaining: '0', percent, state,
});

describe('flagFor', () => {
  it('given a breach, it raises a breach flag naming the scope that went over', () => {
    // Day limit 1 kg: 0.9 kg (90 %, nearing) → 1.2 kg (120 %, over). Season limit 5 kg: 0.9 → 1.2 kg (18 %, 24 %), within.
    const before = [tally('day', '0.9', '1', 90, 'nearing'), tally('season', '0.9', '5', 18, 'within')];
    const after = [tally('day', '1.2', '1', 120, 'over'), tally('season', '1.2', '5', 24, 'within')];
    expect(flagFor(before, after, true)).toEqual({ kind: 'breach', scopes: ['day'], worstState: 'over' });
  });

  it('given a breach on a tally that was over already, it still raises a breach flag', () => {
    // Day limit 1 kg: 1.2 kg (120 %, over) → 1.5 kg (150 %, over): no state rises, but a breach always flags.
    const before = [tally('day', '1.2', '1', 120, 'over')];
    const after = [tally('day', '1.5', '1', 150, 'over')];
    expect(flagFor(before, after, true)).toEqual({ kind: 'breach', scopes: ['day'], worstState: 'over' });
  });

  it('given a tally moving from within to nearing, it raises a nearing flag with that scope', () => {
    // Season limit 5 kg: 3.5 kg (70 %, within) → 4 kg (80 %, nearing: at the threshold). Day limit 1 kg: 0 → 0.5 kg (50 %), within.
    const before = [tally('day', '0', '1', 0, 'within'), tally('season', '3.5', '5', 70, 'within')];
    const after = [tally('day', '0.5', '1', 50, 'within'), tally('season', '4', '5', 80, 'nearing')];
    expect(flagFor(before, after, false)).toEqual({ kind: 'nearing', scopes: ['season'], worstState: 'nearing' });
  });

  it('given a tally that was nearing and stays nearing, it raises no flag', () => {
    // Season limit 5 kg: 4 kg (80 %) → 4.5 kg (90 %), nearing both times.
    const before = [tally('season', '4', '5', 80, 'nearing')];
    const after = [tally('season', '4.5', '5', 90, 'nearing')];
    expect(flagFor(before, after, false)).toBeNull();
  });

  it('given a tally that stays within, it raises no flag', () => {
    expect(flagFor([tally('day', '0.1', '1', 10, 'within')], [tally('day', '0.2', '1', 20, 'within')], false)).toBeNull();
  });

  it('given a tally moving from nearing to reached, it counts as raised: a nearing flag whose worst state is reached', () => {
    // Day limit 1 kg: 0.8 kg (80 %, nearing) → 1 kg (100 %, reached).
    const before = [tally('day', '0.8', '1', 80, 'nearing')];
    const after = [tally('day', '1', '1', 100, 'reached')];
    expect(flagFor(before, after, false)).toEqual({ kind: 'nearing', scopes: ['day'], worstState: 'reached' });
  });

  it('given a scope the tallies before did not have, it reads it as within before', () => {
    // Club cap 10 kg first shown with 8.5 kg (85 %, nearing).
    expect(flagFor([], [tally('club-season', '8.5', '10', 85, 'nearing')], false)).toEqual({ kind: 'nearing', scopes: ['club-season'], worstState: 'nearing' });
  });
});
