import { describe, expect, it } from 'vitest';
import { limitsInForce, projectEntry, talliesFor, tallyState } from '../../src/lib/field/tallies';
import type { AllowanceFacts, LimitFacts, PermitFacts } from '../../src/lib/field/types';
import { UnitMismatch } from '../../src/lib/units';

/*
 * Expected figures are worked by hand from the NIST definitions (REFERENCES §1): 1 oz = 28.349523125 g,
 * 1 lb = 453.59237 g, 1 US quart = 946.352946 mL, 1 US gallon = 3785.411784 mL, 1 US cup = 236.5882365 mL.
 * Limits echo published rules (REFERENCES §7): wild leek 200 g per person per year (Quebec ✔);
 * 1 gallon of mushrooms per day (Mt. Baker–Snoqualmie ✔); one quart per species per person per day (a park ◐).
 */

const forager = { id: 'owen', clubIds: ['three-ridges'] };
const permit = (over: Partial<PermitFacts> = {}): PermitFacts => ({
  id: 'permit-1', holderUserId: 'owen', holderClubId: null, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31',
  feeMinor: null, feePaid: true, acceptedTermsId: null, ...over,
});
const clubPermit = permit({ id: 'club-permit', holderUserId: null, holderClubId: 'three-ridges' });
const limit = (scope: LimitFacts['scope'], quantity: string, unit: LimitFacts['unit'], permitId: string | null = null): LimitFacts => ({ scope, quantity, unit, permitId });
const allowance = (limits: LimitFacts[], speciesId = 'chanterelle'): AllowanceFacts => ({
  speciesId, commonName: 'Golden chanterelle', scientificName: 'Cantharellus cibarius', seasons: [{ start: '07-01', end: '10-15' }],
  methods: ['cut', 'pick'], limits, cautions: [], lookalikes: [],
});
const ctx = (p: PermitFacts | null = permit(), thresholdPercent = 80) => ({ forager, permit: p, thresholdPercent });

describe('tallyState', () => {
  it('given use below the 80 % threshold, it is within', () => {
    expect(tallyState('79.999999', '100', 80)).toBe('within');
  });
  it('given use exactly at the 80 % threshold, it is nearing', () => {
    expect(tallyState('80', '100', 80)).toBe('nearing');
  });
  it('given a parcel threshold of 75 %, it is nearing at exactly 75 % and within just under', () => {
    expect(tallyState('750', '1000', 75)).toBe('nearing');
    expect(tallyState('749.999', '1000', 75)).toBe('within');
  });
  it('given use of exactly 100 %, it is reached', () => {
    expect(tallyState('3785.411784', '3785.411784', 80)).toBe('reached');
  });
  it('given use a millionth past the limit, it is over', () => {
    expect(tallyState('100.000001', '100', 80)).toBe('over');
  });
});

describe('talliesFor: scopes', () => {
  const parcelLimits = [
    limit('visit', '1', 'us-quart'), limit('day', '1', 'us-gallon'), limit('season', '5', 'us-gallon'), limit('parcel-season', '40', 'us-gallon'),
    limit('club-season', '12', 'us-gallon', 'club-permit'),
  ];
  it('given a club permit, it gives one tally per scope, club-season included, in scope order', () => {
    expect(talliesFor(allowance(parcelLimits), {}, ctx(clubPermit)).map((t) => t.scope)).toEqual(['visit', 'day', 'season', 'parcel-season', 'club-season']);
  });
  it('given a personal permit, it leaves the club-wide cap out', () => {
    expect(talliesFor(allowance(parcelLimits), {}, ctx(permit())).map((t) => t.scope)).toEqual(['visit', 'day', 'season', 'parcel-season']);
  });
  it('given a club-season limit on the parcel itself and a personal permit, it still leaves it out', () => {
    expect(talliesFor(allowance([limit('club-season', '12', 'us-gallon')]), {}, ctx(permit()))).toEqual([]);
  });
  it('given no limits, it gives no tallies', () => {
    expect(talliesFor(allowance([]), {}, ctx())).toEqual([]);
  });
  it('given use in mL against a gallon limit, it reports use and remainder in gallons: 1 quart is 0.25 gal, 25 %', () => {
    const [day] = talliesFor(allowance([limit('day', '1', 'us-gallon')]), { chanterelle: { day: '946.352946' } }, ctx());
    expect(day).toEqual({ scope: 'day', limit: { quantity: '1', unit: 'us-gallon', fromPermit: false }, used: '0.25', remaining: '0.75', percent: 25, state: 'within' });
  });
  it('given use of another species, it does not count it', () => {
    const [day] = talliesFor(allowance([limit('day', '1', 'us-gallon')]), { morel: { day: '3785.411784' } }, ctx());
    expect(day?.used).toBe('0');
  });
});

describe('talliesFor: a permit may tighten, never loosen', () => {
  it('given a permit day limit of 2 quarts under a parcel limit of 1 gallon, the permit limit replaces it', () => {
    const [day] = talliesFor(allowance([limit('day', '1', 'us-gallon'), limit('day', '2', 'us-quart', 'permit-1')]), {}, ctx());
    expect(day?.limit).toEqual({ quantity: '2', unit: 'us-quart', fromPermit: true });
  });
  it('given a looser permit limit (6 quarts against 1 gallon), it is ignored', () => {
    const [day] = talliesFor(allowance([limit('day', '1', 'us-gallon'), limit('day', '6', 'us-quart', 'permit-1')]), {}, ctx());
    expect(day?.limit).toEqual({ quantity: '1', unit: 'us-gallon', fromPermit: false });
  });
  it('given an equal permit limit (4 quarts = 1 gallon), the parcel limit stands', () => {
    const [day] = talliesFor(allowance([limit('day', '1', 'us-gallon'), limit('day', '4', 'us-quart', 'permit-1')]), {}, ctx());
    expect(day?.limit.fromPermit).toBe(false);
  });
  it('given a permit limit for a scope the parcel leaves open, it applies', () => {
    expect(talliesFor(allowance([limit('visit', '1', 'us-quart', 'permit-1')]), {}, ctx()).map((t) => t.limit.fromPermit)).toEqual([true]);
  });
  it("given a tighter limit on someone else's permit, it does not apply to this forager", () => {
    const [day] = talliesFor(allowance([limit('day', '1', 'us-gallon'), limit('day', '1', 'us-cup', 'permit-other')]), {}, ctx());
    expect(day?.limit.unit).toBe('us-gallon');
  });
  it('given no permit in force, only the parcel limits show', () => {
    expect(limitsInForce(allowance([limit('day', '1', 'us-gallon'), limit('day', '1', 'us-cup', 'permit-1')]), { forager, permit: null }).map((l) => l.unit)).toEqual(['us-gallon']);
  });
});

describe('talliesFor: hand-worked mixed units', () => {
  const leek = allowance([limit('season', '200', 'g')], 'wild-leek');
  it('given 3 oz and 50 g against 200 g (Quebec ✔), it is 135.048569375 g used, 67.52 %, within', () => {
    // 3 × 28.349523125 = 85.048569375 g; + 50 g = 135.048569375 g; 200 − that = 64.951430625 g.
    const [season] = talliesFor(leek, { 'wild-leek': { season: '135.048569375' } }, ctx());
    expect(season).toMatchObject({ used: '135.048569', remaining: '64.951431', percent: 67.52, state: 'within' });
  });
  it('given an 8 oz limit and 113.3980925 g used (4 × 28.349523125 g), it is exactly 4 oz used and 4 remaining, 50 %', () => {
    const [season] = talliesFor(allowance([limit('season', '8', 'oz')]), { chanterelle: { season: '113.3980925' } }, ctx());
    expect(season).toMatchObject({ used: '4', remaining: '4', percent: 50, state: 'within' });
  });
  it('given use past the limit, remaining is 0 and percent is past 100', () => {
    const [season] = talliesFor(leek, { 'wild-leek': { season: '250' } }, ctx());
    expect(season).toMatchObject({ remaining: '0', percent: 125, state: 'over' });
  });
});

describe('projectEntry', () => {
  const mushrooms = allowance([limit('visit', '1', 'us-quart'), limit('day', '1', 'us-gallon')]);
  const usage = { chanterelle: { visit: '0', day: '2839.058838' } }; // 3 quarts today: 3 × 946.352946 mL
  it('given 3 quarts today and a 1-quart entry, the day tally would be reached exactly and the visit tally too, no breach', () => {
    const projection = projectEntry(mushrooms, usage, { quantity: '1', unit: 'us-quart' }, ctx());
    expect(projection.tallies.map((t) => [t.scope, t.state])).toEqual([['visit', 'reached'], ['day', 'reached']]);
    expect(projection.wouldBreach).toBe(false);
    expect(projection.entryBase).toBe('946.352946');
  });
  it('given 2 US cups (half a quart), the day would stand at 3.5 quarts = 87.5 %: nearing', () => {
    const projection = projectEntry(mushrooms, usage, { quantity: '2', unit: 'us-cup' }, ctx());
    expect(projection.tallies.find((t) => t.scope === 'day')).toMatchObject({ used: '0.875', percent: 87.5, state: 'nearing' });
    expect(projection.tallies.find((t) => t.scope === 'visit')).toMatchObject({ used: '0.5', state: 'within' });
  });
  it('given 1.5 L on top of 3 quarts, the day would be 4339.058838 mL against 3785.411784 mL: over, a breach', () => {
    const projection = projectEntry(mushrooms, usage, { quantity: '1.5', unit: 'L' }, ctx());
    expect(projection.wouldBreach).toBe(true);
    expect(projection.breaches).toEqual(['visit', 'day']);
  });
  it('given wild leek at 135.048569375 g of 200 g, 1 oz more is 163.3980925 g (81.69 %): nearing; 0.15 lb more (68.0388555 g) is 203.087424875 g: over', () => {
    const leek = allowance([limit('season', '200', 'g')], 'wild-leek');
    const used = { 'wild-leek': { season: '135.048569375' } };
    expect(projectEntry(leek, used, { quantity: '1', unit: 'oz' }, ctx()).tallies[0]).toMatchObject({ used: '163.398093', percent: 81.69, state: 'nearing' });
    const over = projectEntry(leek, used, { quantity: '0.15', unit: 'lb' }, ctx());
    expect(over.tallies[0]).toMatchObject({ used: '203.087425', state: 'over' });
    expect(over.wouldBreach).toBe(true);
  });
  it('given an entry in grams against volume limits, it throws UnitMismatch naming both units', () => {
    expect(() => projectEntry(mushrooms, usage, { quantity: '300', unit: 'g' }, ctx())).toThrow(UnitMismatch);
    expect(() => projectEntry(mushrooms, usage, { quantity: '300', unit: 'g' }, ctx())).toThrow('That is a mass (g) but this limit counts volume (US quart)');
  });
  it('given a species with no limits, nothing can breach', () => {
    expect(projectEntry(allowance([]), {}, { quantity: '10', unit: 'kg' }, ctx())).toEqual({ tallies: [], wouldBreach: false, breaches: [], entryBase: '10000' });
  });
});
