import { describe, expect, it } from 'vitest';
import { countingFactsFor, flagFor, measuresOf, usageWindows } from '../../src/lib/field/counting';
import type { AllowanceFacts, LimitFacts, LimitScope, ParcelFacts, Tally, TallyState } from '../../src/lib/field/types';
import type { Measure, Unit } from '../../src/lib/units';

/*
 * The counting facts an entry stores when it is written (the brief of the counting model; GLOSSARY
 * "season": yearly MM-DD windows, both ends included, a window whose end comes before its start
 * crosses New Year). Every expected date is read off the calendar by hand; leap years follow the
 * Gregorian rule (2028 is a leap year, 2026 and 2027 are not).
 */

const limit = (scope: LimitScope, quantity: string, unit: Unit, permitId: string | null = null): LimitFacts => ({ scope, quantity, unit, permitId });
const allowance = (speciesId: string, seasons: AllowanceFacts['seasons'], limits: LimitFacts[] = [limit('season', '3', 'kg')]): AllowanceFacts => ({
  speciesId, commonName: speciesId, scientificName: '', seasons, methods: ['pick'], limits, cautions: [], lookalikes: [],
});
const chanterelle = allowance('chanterelle', [{ start: '07-01', end: '09-30' }]);
const clubPermit = { id: 'p-club', holderClubId: 'three-ridges' };
const ownPermit = { id: 'p-owen', holderClubId: null };

describe('countingFactsFor', () => {
  it('given an entry under a club permit in a visit on 2026-08-09, it stores that day, the visit, the permit, the club and the season 2026-07-01 … 2026-09-30', () => {
    expect(countingFactsFor({ allowance: chanterelle, permit: clubPermit, visitId: 'visit-1', localDate: '2026-08-09' })).toEqual({
      countedOn: '2026-08-09', countedVisitId: 'visit-1', permitId: 'p-club', clubId: 'three-ridges', seasonStart: '2026-07-01', seasonEnd: '2026-09-30',
    });
  });
  it("given the forager's own permit, the club is null", () => {
    expect(countingFactsFor({ allowance: chanterelle, permit: ownPermit, visitId: 'visit-1', localDate: '2026-08-09' })).toMatchObject({ permitId: 'p-owen', clubId: null });
  });
  it('given no permit and no visit, both are null and the day and season are still decided', () => {
    expect(countingFactsFor({ allowance: chanterelle, permit: null, visitId: null, localDate: '2026-07-01' })).toEqual({
      countedOn: '2026-07-01', countedVisitId: null, permitId: null, clubId: null, seasonStart: '2026-07-01', seasonEnd: '2026-09-30',
    });
  });
  it('given the last day of the window it counts, and the day after it is out of season: null', () => {
    expect(countingFactsFor({ allowance: chanterelle, permit: clubPermit, visitId: 'v', localDate: '2026-09-30' })).toMatchObject({ seasonEnd: '2026-09-30' });
    expect(countingFactsFor({ allowance: chanterelle, permit: clubPermit, visitId: 'v', localDate: '2026-10-01' })).toBeNull();
    expect(countingFactsFor({ allowance: chanterelle, permit: clubPermit, visitId: 'v', localDate: '2026-06-30' })).toBeNull();
  });
  it('given overlapping windows 04-15 … 06-30 and 06-01 … 07-31 on 2026-06-15, both hold the day and it stores one joined season, 2026-04-15 … 2026-07-31', () => {
    const nettle = allowance('nettle', [{ start: '04-15', end: '06-30' }, { start: '06-01', end: '07-31' }]);
    expect(countingFactsFor({ allowance: nettle, permit: ownPermit, visitId: 'v', localDate: '2026-06-15' })).toMatchObject({ seasonStart: '2026-04-15', seasonEnd: '2026-07-31' });
  });
  it('given a window 11-15 … 02-28 that crosses New Year, an entry on 2027-01-10 counts in 2026-11-15 … 2027-02-28', () => {
    const chaga = allowance('chaga', [{ start: '11-15', end: '02-28' }]);
    expect(countingFactsFor({ allowance: chaga, permit: ownPermit, visitId: 'v', localDate: '2027-01-10' })).toEqual({
      countedOn: '2027-01-10', countedVisitId: 'v', permitId: 'p-owen', clubId: null, seasonStart: '2026-11-15', seasonEnd: '2027-02-28',
    });
  });
  it('given 29 February 2028 inside 02-01 … 03-31 of that leap year, it counts on 2028-02-29 in 2028-02-01 … 2028-03-31', () => {
    const ramps = allowance('ramps', [{ start: '02-01', end: '03-31' }]);
    expect(countingFactsFor({ allowance: ramps, permit: ownPermit, visitId: 'v', localDate: '2028-02-29' })).toMatchObject({
      countedOn: '2028-02-29', seasonStart: '2028-02-01', seasonEnd: '2028-03-31',
    });
  });
});

describe('measuresOf', () => {
  it("given limits in g, kg and plants, and a permit's limit in bulbs, it lists mass, bulbs and plants in measure order", () => {
    const leek = allowance('leek', [{ start: '04-10', end: '05-20' }], [limit('season', '50', 'plant'), limit('day', '200', 'g'), limit('season', '1', 'kg'), limit('visit', '10', 'bulb', 'p-x')]);
    expect(measuresOf(leek)).toEqual(['mass', 'bulbs', 'plants']);
  });
  it('given no limits, it lists none', () => {
    expect(measuresOf(allowance('x', [{ start: '01-01', end: '12-31' }], []))).toEqual([]);
  });
});

describe('usageWindows', () => {
  const box = { type: 'MultiPolygon' as const, coordinates: [[[[0, 0], [1, 0], [1, 1], [0, 1], [0, 0]]]] };
  const parcel: ParcelFacts = {
    id: 'sugarbush', name: 'Sugarbush', timeZone: 'America/New_York', nearingThresholdPercent: 75, boundary: box, zones: [], closures: [], hazards: [],
    currentTermsId: null, permits: [],
    allowances: [
      // Wild leek, 200 g or 50 plants (REFERENCES §7, Quebec ✔): two measures.
      allowance('leek', [{ start: '04-10', end: '05-20' }], [limit('season', '200', 'g'), limit('season', '50', 'plant')]),
      chanterelle,
      allowance('oyster', [{ start: '04-15', end: '06-30' }, { start: '09-15', end: '12-15' }], [limit('day', '1', 'kg'), limit('season', '5', 'kg')]),
      allowance('fiddlehead', [{ start: '04-20', end: '05-31' }], []),
    ],
  };
  it('given 2026-05-01, it gives one window per in-season allowance and measure its limits count (leek mass and plants, oyster mass), none for chanterelle (out of season) or the fiddlehead (no limits)', () => {
    expect(usageWindows(parcel, '2026-05-01', 'open')).toEqual([
      { parcelId: 'sugarbush', speciesId: 'leek', measure: 'mass', seasonStart: '2026-04-10', seasonEnd: '2026-05-20', day: '2026-05-01', visit: 'open' },
      { parcelId: 'sugarbush', speciesId: 'leek', measure: 'plants', seasonStart: '2026-04-10', seasonEnd: '2026-05-20', day: '2026-05-01', visit: 'open' },
      { parcelId: 'sugarbush', speciesId: 'oyster', measure: 'mass', seasonStart: '2026-04-15', seasonEnd: '2026-06-30', day: '2026-05-01', visit: 'open' },
    ]);
  });
  it('given 2026-10-01 and a given visit, it gives the oyster in its autumn window 2026-09-15 … 2026-12-15 and the visit as given', () => {
    expect(usageWindows(parcel, '2026-10-01', 'visit-9')).toEqual([
      { parcelId: 'sugarbush', speciesId: 'oyster', measure: 'mass', seasonStart: '2026-09-15', seasonEnd: '2026-12-15', day: '2026-10-01', visit: 'visit-9' },
    ]);
  });
  it('given a day when nothing is in season (2026-01-15), it gives no windows', () => {
    expect(usageWindows(parcel, '2026-01-15', null)).toEqual([]);
  });
});

/*
 * flagFor(before, after, breach): the tallies before and after an entry (GLOSSARY "flag": a breach,
 * or a tally moved into nearing or reached). States worked by hand at an 80 % threshold.
 */
const tally = (scope: LimitScope, measure: Measure, unit: Unit, used: string, limitQuantity: string, percent: number, state: TallyState): Tally => ({
  scope, measure, limit: { quantity: limitQuantity, unit, fromPermit: false }, used, remaining: '0', percent, state,
});

describe('flagFor', () => {
  it('given a breach, it raises a breach flag naming the scope that went over', () => {
    // Day 500 g: 450 g (90 %, nearing) → 600 g (120 %, over). Season 3 kg: 0.45 → 0.6 kg (15 %, 20 %), within.
    const before = [tally('day', 'mass', 'g', '450', '500', 90, 'nearing'), tally('season', 'mass', 'kg', '0.45', '3', 15, 'within')];
    const after = [tally('day', 'mass', 'g', '600', '500', 120, 'over'), tally('season', 'mass', 'kg', '0.6', '3', 20, 'within')];
    expect(flagFor(before, after, true)).toEqual({ kind: 'breach', scopes: ['day'], worstState: 'over' });
  });
  it('given a tally moving from within into nearing, it raises a nearing flag', () => {
    // Season 50 plants: 35 (70 %) → 40 (80 %, at the threshold).
    expect(flagFor([tally('season', 'plants', 'plant', '35', '50', 70, 'within')], [tally('season', 'plants', 'plant', '40', '50', 80, 'nearing')], false))
      .toEqual({ kind: 'nearing', scopes: ['season'], worstState: 'nearing' });
  });
  it('given a tally moving from within straight to reached, it raises a flag whose worst state is reached', () => {
    // Day 25 bulbs: 10 (40 %) → 25 (100 %).
    expect(flagFor([tally('day', 'bulbs', 'bulb', '10', '25', 40, 'within')], [tally('day', 'bulbs', 'bulb', '25', '25', 100, 'reached')], false))
      .toEqual({ kind: 'nearing', scopes: ['day'], worstState: 'reached' });
  });
  it('given a tally that stays where it was (nearing → nearing, within → within), it raises no flag', () => {
    expect(flagFor([tally('season', 'mass', 'g', '160', '200', 80, 'nearing')], [tally('season', 'mass', 'g', '170', '200', 85, 'nearing')], false)).toBeNull();
    expect(flagFor([tally('day', 'mass', 'g', '10', '500', 2, 'within')], [tally('day', 'mass', 'g', '20', '500', 4, 'within')], false)).toBeNull();
  });
  it('given a tally that falls back (reached → nearing after a correction), it raises no flag', () => {
    expect(flagFor([tally('day', 'mass', 'g', '500', '500', 100, 'reached')], [tally('day', 'mass', 'g', '450', '500', 90, 'nearing')], false)).toBeNull();
  });

  describe('per measure (wild leek, 200 g or 50 plants, REFERENCES §7)', () => {
    it('given the grams already nearing and the plants moving into nearing in the same scope, it flags the plants: the grams do not stand in for them', () => {
      // Season 200 g: 170 g (85 %) → 175 g (87.5 %), nearing both times. Season 50 plants: 30 (60 %) → 42 (84 %), within → nearing.
      const before = [tally('season', 'mass', 'g', '170', '200', 85, 'nearing'), tally('season', 'plants', 'plant', '30', '50', 60, 'within')];
      const after = [tally('season', 'mass', 'g', '175', '200', 87.5, 'nearing'), tally('season', 'plants', 'plant', '42', '50', 84, 'nearing')];
      expect(flagFor(before, after, false)).toEqual({ kind: 'nearing', scopes: ['season'], worstState: 'nearing' });
    });
    it('given the grams nearing before and after and the plants within before and after, it raises no flag', () => {
      const before = [tally('season', 'mass', 'g', '170', '200', 85, 'nearing'), tally('season', 'plants', 'plant', '30', '50', 60, 'within')];
      const after = [tally('season', 'mass', 'g', '175', '200', 87.5, 'nearing'), tally('season', 'plants', 'plant', '31', '50', 62, 'within')];
      expect(flagFor(before, after, false)).toBeNull();
    });
    it('given the plants going over in the season while the grams move into nearing for the day, a breach flag names both scopes', () => {
      // Day 100 g: 70 g (70 %) → 90 g (90 %). Season 50 plants: 45 (90 %) → 55 (110 %).
      const before = [tally('day', 'mass', 'g', '70', '100', 70, 'within'), tally('season', 'plants', 'plant', '45', '50', 90, 'nearing')];
      const after = [tally('day', 'mass', 'g', '90', '100', 90, 'nearing'), tally('season', 'plants', 'plant', '55', '50', 110, 'over')];
      expect(flagFor(before, after, true)).toEqual({ kind: 'breach', scopes: ['day', 'season'], worstState: 'over' });
    });
  });
});
