import { describe, expect, it } from 'vitest';
import { thrown } from './support';
import { limitsInForce, MissingQuantity, projectEntry, talliesFor, tallyState } from '../../src/lib/field/tallies';
import type { AllowanceFacts, LimitFacts, PermitFacts, Usage } from '../../src/lib/field/types';
import { UnitMismatch } from '../../src/lib/units';

/*
 * Expected figures are worked by hand from the NIST definitions (REFERENCES §1): 1 oz = 28.349523125 g,
 * 1 lb = 453.59237 g, 1 US liquid quart = 946.352946 mL, 1 US liquid gallon = 3785.411784 mL,
 * 1 US cup = 236.5882365 mL. Percentages are rounded half up to one decimal (the second decimal
 * decides). Limits echo published rules (REFERENCES §7): wild leek 200 g or 50 plants per person per
 * year (Quebec ✔); 1 gallon of mushrooms per day (Mt. Baker–Snoqualmie ✔); one quart per species per
 * person per day (a park ◐).
 */

const forager = { id: 'owen', clubIds: ['three-ridges'] };
const permit = (over: Partial<PermitFacts> = {}): PermitFacts => ({
  id: 'permit-1', holderUserId: 'owen', holderClubId: null, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31',
  feeMinor: null, feePaid: true, acceptedTermsId: null, ...over,
});
const clubPermit = permit({ id: 'club-permit', holderUserId: null, holderClubId: 'three-ridges' });
const limit = (scope: LimitFacts['scope'], quantity: string, unit: LimitFacts['unit'], permitId: string | null = null): LimitFacts => ({ scope, quantity, unit, permitId });
const allowance = (limits: LimitFacts[], speciesId = 'chanterelle', commonName = 'Golden chanterelle'): AllowanceFacts => ({
  speciesId, commonName, scientificName: 'Cantharellus cibarius', seasons: [{ start: '07-01', end: '10-15' }],
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
  it('given use in mL against a gallon limit, it reports use and remainder in gallons, with the measure: 1 quart is 0.25 gal, 25 %', () => {
    const [day] = talliesFor(allowance([limit('day', '1', 'us-gallon')]), { chanterelle: { volume: { day: '946.352946' } } }, ctx());
    expect(day).toEqual({
      scope: 'day', measure: 'volume', limit: { quantity: '1', unit: 'us-gallon', fromPermit: false }, used: '0.25', remaining: '0.75', percent: 25, state: 'within',
    });
  });
  it('given use of another species, it does not count it', () => {
    const [day] = talliesFor(allowance([limit('day', '1', 'us-gallon')]), { morel: { volume: { day: '3785.411784' } } }, ctx());
    expect(day?.used).toBe('0');
  });
  it('given use of the same species in another measure, it does not count it against a volume limit', () => {
    const [day] = talliesFor(allowance([limit('day', '1', 'us-gallon')]), { chanterelle: { mass: { day: '3785.411784' } } }, ctx());
    expect(day).toMatchObject({ used: '0', percent: 0, state: 'within' });
  });
  it("given use by two clubs, the club-season tally counts only the permit holder's: 6 of 12 gal (6 × 3785.411784 = 22712.470704 mL), 50 %", () => {
    const usage: Usage = { chanterelle: { volume: { 'club-season': { 'three-ridges': '22712.470704', 'other-club': '40000' } } } };
    const club = talliesFor(allowance(parcelLimits), usage, ctx(clubPermit)).find((t) => t.scope === 'club-season');
    expect(club).toMatchObject({ measure: 'volume', used: '6', remaining: '6', percent: 50, state: 'within' });
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
  const leek = allowance([limit('season', '200', 'g')], 'wild-leek', 'Wild leek');
  it('given 3 oz and 50 g against 200 g (Quebec ✔), it is 135.048569375 g used, 67.5 %, within', () => {
    // 3 × 28.349523125 = 85.048569375 g; + 50 g = 135.048569375 g; 200 − that = 64.951430625 g.
    // 135.048569375 / 200 = 67.5242846875 %: the second decimal is 2, so 67.5 %.
    const [season] = talliesFor(leek, { 'wild-leek': { mass: { season: '135.048569375' } } }, ctx());
    expect(season).toMatchObject({ measure: 'mass', used: '135.048569', remaining: '64.951431', percent: 67.5, state: 'within' });
  });
  it('given an 8 oz limit and 113.3980925 g used (4 × 28.349523125 g), it is exactly 4 oz used and 4 remaining, 50 %', () => {
    const [season] = talliesFor(allowance([limit('season', '8', 'oz')]), { chanterelle: { mass: { season: '113.3980925' } } }, ctx());
    expect(season).toMatchObject({ used: '4', remaining: '4', percent: 50, state: 'within' });
  });
  it('given use past the limit, remaining is 0 and percent is past 100', () => {
    const [season] = talliesFor(leek, { 'wild-leek': { mass: { season: '250' } } }, ctx());
    expect(season).toMatchObject({ remaining: '0', percent: 125, state: 'over' });
  });
});

describe('talliesFor: amounts shown apart from the state (a club audit)', () => {
  // Day 100 g, season 200 g. The forager took 85 g today and 180 g this season under any permit; the
  // club's permits hold 20 g and 60 g of it. The state is worked on the whole: 85 ≥ 80 % of 100 and
  // 180 ≥ 80 % of 200 (160), both nearing; the amounts shown are the club's share.
  const limits = [limit('day', '100', 'g'), limit('season', '200', 'g')];
  const whole: Usage = { chanterelle: { mass: { day: '85', season: '180' } } };
  const clubShare: Usage = { chanterelle: { mass: { day: '20', season: '60' } } };
  it('given `shown`, it takes used, remaining and percent from it and the state from the whole usage', () => {
    const tallies = talliesFor(allowance(limits), whole, ctx(clubPermit), clubShare);
    expect(tallies.map((t) => [t.scope, t.used, t.remaining, t.percent, t.state])).toEqual([
      ['day', '20', '80', 20, 'nearing'],
      ['season', '60', '140', 30, 'nearing'],
    ]);
  });
  it('given no `shown`, it shows the whole usage: 85 % and 90 %', () => {
    expect(talliesFor(allowance(limits), whole, ctx(clubPermit)).map((t) => [t.used, t.percent, t.state])).toEqual([['85', 85, 'nearing'], ['180', 90, 'nearing']]);
  });
  it('given `shown` with nothing for the species, it shows 0 used and still the state of the whole', () => {
    expect(talliesFor(allowance(limits), whole, ctx(clubPermit), {}).map((t) => [t.used, t.percent, t.state])).toEqual([['0', 0, 'nearing'], ['0', 0, 'nearing']]);
  });
});

describe('projectEntry', () => {
  const mushrooms = allowance([limit('visit', '1', 'us-quart'), limit('day', '1', 'us-gallon')]);
  const usage: Usage = { chanterelle: { volume: { visit: '0', day: '2839.058838' } } }; // 3 quarts today: 3 × 946.352946 mL
  it('given 3 quarts today and a 1-quart entry, the day tally would be reached exactly and the visit tally too, no breach', () => {
    const projection = projectEntry(mushrooms, usage, [{ quantity: '1', unit: 'us-quart' }], ctx());
    expect(projection.tallies.map((t) => [t.scope, t.measure, t.state])).toEqual([['visit', 'volume', 'reached'], ['day', 'volume', 'reached']]);
    expect(projection.wouldBreach).toBe(false);
    expect(projection.bases).toEqual({ volume: '946.352946' });
  });
  it('given 2 US cups (half a quart), the day would stand at 3.5 quarts = 87.5 %: nearing', () => {
    const projection = projectEntry(mushrooms, usage, [{ quantity: '2', unit: 'us-cup' }], ctx());
    expect(projection.tallies.find((t) => t.scope === 'day')).toMatchObject({ used: '0.875', percent: 87.5, state: 'nearing' });
    expect(projection.tallies.find((t) => t.scope === 'visit')).toMatchObject({ used: '0.5', percent: 50, state: 'within' });
  });
  it('given 1.5 L on top of 3 quarts, the day would be 4339.058838 mL against 3785.411784 mL: over, a breach', () => {
    const projection = projectEntry(mushrooms, usage, [{ quantity: '1.5', unit: 'L' }], ctx());
    expect(projection.wouldBreach).toBe(true);
    expect(projection.breaches).toEqual(['visit', 'day']);
  });
  it('given wild leek at 135.048569375 g of 200 g, 1 oz more is 163.3980925 g (81.69904625 % → 81.7 %): nearing; 0.15 lb more (68.0388555 g) is 203.087424875 g: over', () => {
    const leek = allowance([limit('season', '200', 'g')], 'wild-leek', 'Wild leek');
    const used: Usage = { 'wild-leek': { mass: { season: '135.048569375' } } };
    expect(projectEntry(leek, used, [{ quantity: '1', unit: 'oz' }], ctx()).tallies[0]).toMatchObject({ used: '163.398093', percent: 81.7, state: 'nearing' });
    const over = projectEntry(leek, used, [{ quantity: '0.15', unit: 'lb' }], ctx());
    // 203.087424875 / 200 = 101.5437124375 % → 101.5 %.
    expect(over.tallies[0]).toMatchObject({ used: '203.087425', percent: 101.5, state: 'over' });
    expect(over.wouldBreach).toBe(true);
  });
  it('given an entry in grams against volume limits, it throws UnitMismatch naming both units', () => {
    expect(() => projectEntry(mushrooms, usage, [{ quantity: '300', unit: 'g' }], ctx())).toThrow(UnitMismatch);
    expect(() => projectEntry(mushrooms, usage, [{ quantity: '300', unit: 'g' }], ctx())).toThrow('That is a mass (g) but this limit counts volume (US liquid quart)');
  });
  it('given a species with no limits, nothing can breach and the entry is kept in its base unit', () => {
    expect(projectEntry(allowance([]), {}, [{ quantity: '10', unit: 'kg' }], ctx())).toEqual({ tallies: [], wouldBreach: false, breaches: [], bases: { mass: '10000' } });
  });
  it("given a club permit, the entry adds to its club's club-season total only: 11 + 2 of 12 gal is 13 gal, 108.3 %, over", () => {
    // 11 × 3785.411784 = 41639.529624 mL; 13/12 = 1.08333… → 108.3 %.
    const capped = allowance([limit('club-season', '12', 'us-gallon', 'club-permit')]);
    const before: Usage = { chanterelle: { volume: { 'club-season': { 'three-ridges': '41639.529624', 'other-club': '100' } } } };
    const projection = projectEntry(capped, before, [{ quantity: '2', unit: 'us-gallon' }], ctx(clubPermit));
    expect(projection.tallies).toMatchObject([{ scope: 'club-season', used: '13', remaining: '0', percent: 108.3, state: 'over' }]);
    expect(projection.breaches).toEqual(['club-season']);
  });
});

describe('two measures: wild leek, 200 g or 50 plants per person per year (REFERENCES §7, Quebec ✔)', () => {
  const leek = allowance([limit('season', '200', 'g'), limit('season', '50', 'plant')], 'wild-leek', 'Wild leek');
  it('given 150 g and 30 plants, it counts both: 75 % of the grams and 60 % of the plants, mass first', () => {
    const projection = projectEntry(leek, {}, [{ quantity: '150', unit: 'g' }, { quantity: '30', unit: 'plant' }], ctx());
    expect(projection.tallies.map((t) => [t.scope, t.measure, t.used, t.percent, t.state])).toEqual([
      ['season', 'mass', '150', 75, 'within'],
      ['season', 'plants', '30', 60, 'within'],
    ]);
    expect(projection.bases).toEqual({ mass: '150', plants: '30' });
    expect(projection.wouldBreach).toBe(false);
  });
  it('given only the grams, it throws MissingQuantity (400, field quantities) asking for the number of plants', () => {
    const error = thrown(() => projectEntry(leek, {}, [{ quantity: '150', unit: 'g' }], ctx()));
    expect(error).toBeInstanceOf(MissingQuantity);
    expect((error as MissingQuantity).status).toBe(400);
    expect((error as MissingQuantity).toJSON()).toEqual({
      error: { code: 'quantity-missing', message: 'The limits for Wild leek here count the number of plants too: give it as well.', field: 'quantities' },
    });
  });
  it('given only the plants, it throws MissingQuantity asking for the weight', () => {
    expect(() => projectEntry(leek, {}, [{ quantity: '30', unit: 'plant' }], ctx())).toThrow('The limits for Wild leek here count its weight too: give it as well.');
  });
  it('given nothing at all, it asks for both', () => {
    expect(() => projectEntry(leek, {}, [], ctx())).toThrow('count its weight and the number of plants too: give each as well.');
  });
  it('given bulbs against a plants limit, it throws UnitMismatch and says to count the plants', () => {
    const plantsOnly = allowance([limit('season', '50', 'plant')], 'wild-leek', 'Wild leek');
    const error = thrown(() => projectEntry(plantsOnly, {}, [{ quantity: '30', unit: 'bulb' }], ctx()));
    expect(error).toBeInstanceOf(UnitMismatch);
    expect((error as UnitMismatch).toJSON()).toEqual({
      error: { code: 'unit-mismatch', message: 'That is a count of bulbs but this limit counts whole plants; count the plants.', field: 'unit' },
    });
  });
  it('given 150 g and 30 bulbs against 200 g or 50 plants, it refuses the bulbs and asks for the plants still missing, not for the grams already given', () => {
    const error = thrown(() => projectEntry(leek, {}, [{ quantity: '150', unit: 'g' }, { quantity: '30', unit: 'bulb' }], ctx()));
    expect(error).toBeInstanceOf(UnitMismatch);
    expect((error as UnitMismatch).message).toBe('That is a count of bulbs but this limit counts whole plants; count the plants.');
  });
  it('given the same measure twice, it refuses the entry', () => {
    expect(() => projectEntry(leek, {}, [{ quantity: '100', unit: 'g' }, { quantity: '1', unit: 'oz' }, { quantity: '3', unit: 'plant' }], ctx())).toThrow('Give the mass once.');
  });

  describe('only a measure the entry adds to can breach', () => {
    // Already 250 g (125 %, over, an earlier acknowledged breach) and 10 plants this season.
    const before: Usage = { 'wild-leek': { mass: { season: '250' }, plants: { season: '10' } } };
    it('given 0 g and 5 plants, the grams stay over but nothing is added to them: no breach (plants 15 of 50 = 30 %)', () => {
      const projection = projectEntry(leek, before, [{ quantity: '0', unit: 'g' }, { quantity: '5', unit: 'plant' }], ctx());
      expect(projection.tallies.map((t) => [t.measure, t.percent, t.state])).toEqual([['mass', 125, 'over'], ['plants', 30, 'within']]);
      expect(projection).toMatchObject({ wouldBreach: false, breaches: [] });
    });
    it('given 1 g and 0 plants, the entry adds to the grams that are over: a breach of the season', () => {
      const projection = projectEntry(leek, before, [{ quantity: '1', unit: 'g' }, { quantity: '0', unit: 'plant' }], ctx());
      expect(projection).toMatchObject({ wouldBreach: true, breaches: ['season'] });
    });
    it('given a correction of +5 plants alone (partial), it needs no grams and does not breach', () => {
      const projection = projectEntry(leek, before, [{ quantity: '5', unit: 'plant' }], ctx(), { partial: true });
      expect(projection.bases).toEqual({ plants: '5' });
      expect(projection).toMatchObject({ wouldBreach: false, breaches: [] });
      expect(projection.tallies.map((t) => [t.measure, t.used])).toEqual([['mass', '250'], ['plants', '15']]);
    });
    it('given a correction of −10 g (partial), the grams stay over at 240 g (120 %) but taking away never breaches', () => {
      const projection = projectEntry(leek, before, [{ quantity: '-10', unit: 'g' }], ctx(), { partial: true });
      expect(projection.tallies[0]).toMatchObject({ measure: 'mass', used: '240', percent: 120, state: 'over' });
      expect(projection).toMatchObject({ wouldBreach: false, breaches: [] });
    });
    it('given 0 g and 41 plants, the plants go over (51 of 50): a breach of the season', () => {
      const projection = projectEntry(leek, before, [{ quantity: '0', unit: 'g' }, { quantity: '41', unit: 'plant' }], ctx());
      expect(projection.tallies[1]).toMatchObject({ measure: 'plants', used: '51', percent: 102, state: 'over' });
      expect(projection.breaches).toEqual(['season']);
    });
  });

  describe('a permit may tighten per scope and measure', () => {
    const byKey = (a: AllowanceFacts) => limitsInForce(a, { forager, permit: permit() }).map((l) => [l.scope, l.measure, l.quantity, l.unit, l.fromPermit]);
    it('given a permit season limit of 30 plants, it replaces the parcel 50 plants and leaves the 200 g alone', () => {
      expect(byKey(allowance([...leek.limits, limit('season', '30', 'plant', 'permit-1')]))).toEqual([
        ['season', 'mass', '200', 'g', false],
        ['season', 'plants', '30', 'plant', true],
      ]);
    });
    it('given a permit season limit of 60 plants (looser than 50), it is ignored', () => {
      expect(byKey(allowance([...leek.limits, limit('season', '60', 'plant', 'permit-1')]))).toEqual([
        ['season', 'mass', '200', 'g', false],
        ['season', 'plants', '50', 'plant', false],
      ]);
    });
    it('given a parcel limit of 200 g and a permit limit of 30 plants for the same scope, both apply: a count never stands in for a mass', () => {
      expect(byKey(allowance([limit('season', '200', 'g'), limit('season', '30', 'plant', 'permit-1')]))).toEqual([
        ['season', 'mass', '200', 'g', false],
        ['season', 'plants', '30', 'plant', true],
      ]);
    });
    it('given a permit limit of 6 oz (170.09713875 g) under the parcel 200 g, it replaces the grams and leaves the plants alone', () => {
      expect(byKey(allowance([...leek.limits, limit('season', '6', 'oz', 'permit-1')]))).toEqual([
        ['season', 'mass', '6', 'oz', true],
        ['season', 'plants', '50', 'plant', false],
      ]);
    });
  });
});
