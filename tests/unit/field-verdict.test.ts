import geodesic from 'geographiclib-geodesic';
import { describe, expect, it } from 'vitest';
import type { AllowanceFacts, CheckInAnswer, LonLat, MultiPolygon, ParcelFacts, PermitFacts, Usage } from '../../src/lib/field';
import { decideCheckIn, methodAllowed } from '../../src/lib/field';

// Small hand-made parcels in the demo valley (invented), all in America/New_York.
const box = (west: number, south: number, east: number, north: number): MultiPolygon => ({
  type: 'MultiPolygon', coordinates: [[[[west, south], [east, south], [east, north], [west, north], [west, south]]]],
});
const direct = ([lon, lat]: LonLat, azimuth: number, metres: number): LonLat => {
  const r = geodesic.Geodesic.WGS84.Direct(lat, lon, azimuth, metres); // geographiclib-geodesic 2.2.0 (⚙)
  return [r.lon2 ?? Number.NaN, r.lat2 ?? Number.NaN];
};

const owen = { id: 'owen', clubIds: ['three-ridges'] };
const june = { id: 'june', clubIds: [] };
const permit = (over: Partial<PermitFacts> = {}): PermitFacts => ({
  id: 'p-owen', holderUserId: 'owen', holderClubId: null, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31',
  feeMinor: 2500, feePaid: true, acceptedTermsId: 'terms-2', ...over,
});
const species = (speciesId: string, commonName: string, seasons: AllowanceFacts['seasons'], limits: AllowanceFacts['limits'] = []): AllowanceFacts => ({
  speciesId, commonName, scientificName: `${commonName} sp.`, seasons, methods: ['cut', 'pick'], limits, cautions: ['Cook well.'], lookalikes: [],
});
const allowances = [
  species('chanterelle', 'Golden chanterelle', [{ start: '07-01', end: '10-15' }], [{ scope: 'day', quantity: '1', unit: 'us-gallon', permitId: null }]),
  species('hen', 'Hen of the woods', [{ start: '09-01', end: '11-15' }]),
  species('chaga', 'Chaga', [{ start: '11-01', end: '03-15' }]),
];
const parcel = (over: Partial<ParcelFacts> = {}): ParcelFacts => ({
  id: 'birch', name: 'Birch Hollow', timeZone: 'America/New_York', nearingThresholdPercent: 80,
  boundary: box(-72.852, 43.948, -72.848, 43.952),
  zones: [{ id: 'z1', name: 'Orchid spring', reason: 'Rare orchids', boundary: box(-72.8505, 43.9495, -72.8495, 43.9505) }],
  closures: [{ startsOn: '2026-11-14', endsOn: '2026-11-30', reason: 'Rifle deer season' }],
  hazards: [{ kind: 'hunting', title: 'Deer stand', detail: 'Wear blaze orange.' }],
  currentTermsId: 'terms-2', permits: [permit()], allowances, ...over,
});
const maple = (over: Partial<ParcelFacts> = {}) => parcel({ id: 'maple', name: 'Maple Run', boundary: box(-72.846, 43.948, -72.842, 43.952), zones: [], closures: [], ...over });

const inBirch: LonLat = [-72.851, 43.9485];
const october = new Date('2026-10-01T14:00:00Z');
const noUsage = (): Usage => ({});
const check = (over: Partial<Parameters<typeof decideCheckIn>[0]> = {}): CheckInAnswer =>
  decideCheckIn({ position: inBirch, accuracyM: 10, at: october, forager: owen, parcels: [parcel()], usage: noUsage, ...over });

describe('clear', () => {
  it('given a forager well inside with a good permit on an open day, it is clear, with the permit, hazards and local date', () => {
    const answer = check({ usage: () => ({ chanterelle: { volume: { day: '946.352946' } } }) });
    expect(answer).toMatchObject({ verdict: 'clear', permitId: 'p-owen', parcel: { id: 'birch', name: 'Birch Hollow' }, localDate: '2026-10-01' });
    expect(answer.hazards).toEqual([{ kind: 'hunting', title: 'Deer stand', detail: 'Wear blaze orange.' }]);
    expect(answer.reasons[0]).toBe('You may harvest on Birch Hollow under your permit, which runs until Dec 31, 2026.');
    expect(answer.reasons.join(' ')).toContain('your responsibility');
  });
  it('given species in and out of season, it answers each: the worst tally, open with no limits, out-of-season', () => {
    const answer = check({ usage: () => ({ chanterelle: { volume: { day: '3028.3294272' } } }) }); // 0.8 US gal = 0.8 × 3785.411784 mL: nearing
    expect(answer.species.map((s) => [s.speciesId, s.state, s.inSeason])).toEqual([['chanterelle', 'nearing', true], ['hen', 'open', true], ['chaga', 'out-of-season', false]]);
    expect(answer.species[0]?.tallies[0]).toMatchObject({ scope: 'day', measure: 'volume', used: '0.8', remaining: '0.2', percent: 80 });
  });
  it('given a club permit and a member of that club, it is clear under the club’s permit', () => {
    const club = permit({ id: 'p-club', holderUserId: null, holderClubId: 'three-ridges' });
    const answer = check({ parcels: [parcel({ permits: [club] })] });
    expect(answer).toMatchObject({ verdict: 'clear', permitId: 'p-club' });
    expect(answer.reasons[0]).toContain("your club's permit");
  });
  it('given the last evening of a closure in New York, which is already the next day in UTC, it uses the parcel’s own date', () => {
    expect(check({ at: new Date('2026-12-01T02:00:00Z') })).toMatchObject({ verdict: 'closed', localDate: '2026-11-30' });
    expect(check({ at: new Date('2026-12-01T05:00:00Z') })).toMatchObject({ verdict: 'clear', localDate: '2026-12-01' });
  });
  it('given overlapping parcels, it takes the one this forager holds a permit for', () => {
    const other = parcel({ id: 'other', name: 'Other claim', permits: [], zones: [] });
    expect(check({ parcels: [other, parcel()] })).toMatchObject({ verdict: 'clear', parcel: { id: 'birch' } });
  });
});

describe('outside and edge', () => {
  it('given a position far from every parcel, it is outside and names the nearest', () => {
    const answer = check({ position: [-72.9, 43.9], parcels: [parcel(), maple()] });
    expect(answer).toMatchObject({ verdict: 'outside', parcel: null, permitId: null, species: [] });
    expect(answer.reasons[1]).toMatch(/^The nearest is Birch Hollow, about [\d.]+ km away\.$/);
  });
  it('given no candidate parcels, it is outside with no distance, says none is near and that the land may still be someone\'s', () => {
    const answer = check({ parcels: [] });
    expect(answer).toMatchObject({ verdict: 'outside', distanceToEdgeM: null, localDate: '2026-10-01' });
    expect(answer.reasons).toEqual([
      'You are not on any parcel open to you in Tallywood, so nothing here is covered by a permit.',
      'None is near here.',
      'The land may still belong to someone: ask before you pick.',
    ]);
  });
  it('given 4.4 m inside the west edge with a 10 m radius, it is edge, 4.4 m from the edge, and asks to move about 6 m in', () => {
    const position = direct([-72.852, 43.9485], 90, 4.4);
    const answer = check({ position });
    expect(answer.verdict).toBe('edge');
    expect(Math.abs((answer.distanceToEdgeM ?? 0) - 4.4)).toBeLessThan(0.001);
    expect(answer.reasons).toEqual([
      'You are about 4 m from the boundary of Birch Hollow and your position is good to 10 m, so it is too close to tell whether you are on the parcel.',
      'Move about 6 m further in, or wait for a better fix.',
    ]);
  });
  it('given 3.5 m outside with a 10 m radius, it asks to move about 14 m in', () => {
    const answer = check({ position: direct([-72.852, 43.9485], 270, 3.5) });
    expect(answer.verdict).toBe('edge');
    expect(answer.reasons[1]).toBe('Move about 14 m further in, or wait for a better fix.');
  });
});

describe('no-permit', () => {
  const noPermit = (permits: PermitFacts[], forager = owen) => check({ parcels: [parcel({ permits })], forager });
  it('given no permit at all, it says so and how to ask', () => {
    expect(noPermit([], june)).toMatchObject({ verdict: 'no-permit', permitId: null, reasons: ['You have no permit here. Ask the landowner from My permits.'] });
  });
  it('given a permit for another parcel only, it is no-permit here', () => {
    const answer = check({ parcels: [parcel({ permits: [] }), maple({ permits: [permit({ id: 'p-maple' })] })] });
    expect(answer).toMatchObject({ verdict: 'no-permit', parcel: { id: 'birch' }, reasons: ['You have no permit here. Ask the landowner from My permits.'] });
  });
  it('given an expired permit, it says when it ended', () => {
    expect(noPermit([permit({ state: 'expired', endsOn: '2026-09-30' })]).reasons).toEqual(['Your permit for Birch Hollow ended on Sep 30, 2026. Ask the landowner for a new one from My permits.']);
  });
  it('given an active permit past its last day (not yet marked expired), it is still no-permit', () => {
    expect(noPermit([permit({ endsOn: '2026-09-30' })]).verdict).toBe('no-permit');
  });
  it('given an approved permit with the fee unpaid, it asks for the fee', () => {
    expect(noPermit([permit({ state: 'approved', feePaid: false })]).reasons).toEqual(['Your permit for Birch Hollow is not active yet: pay the access fee, from My permits.']);
  });
  it('given an approved permit with the terms not accepted, it asks for the terms', () => {
    expect(noPermit([permit({ state: 'approved', acceptedTermsId: null })]).reasons).toEqual(["Your permit for Birch Hollow is not active yet: accept the parcel's current terms, from My permits."]);
  });
  it('given an active permit whose terms have since changed, it asks for the new terms', () => {
    expect(noPermit([permit({ acceptedTermsId: 'terms-1' })]).reasons[0]).toContain('have changed');
  });
  it('given a permit that begins later, it says when', () => {
    expect(noPermit([permit({ state: 'approved', startsOn: '2026-11-01' })]).reasons).toEqual(['Your permit for Birch Hollow begins on Nov 1, 2026.']);
  });
  it('given a pending request, it says the landowner has yet to answer', () => {
    expect(noPermit([permit({ state: 'requested', feePaid: false, acceptedTermsId: null })]).reasons[0]).toContain("waiting for the landowner's answer");
  });
  it('given a club permit and a forager outside the club, it is no-permit', () => {
    expect(noPermit([permit({ id: 'p-club', holderUserId: null, holderClubId: 'three-ridges' })], june).verdict).toBe('no-permit');
  });
  it('given an approved permit with nothing left to do on a day within its dates, it counts as active', () => {
    expect(noPermit([permit({ state: 'approved' })]).verdict).toBe('clear');
  });
  it('given a parcel with no fee and no terms, an active permit needs neither', () => {
    expect(check({ parcels: [parcel({ currentTermsId: null, permits: [permit({ feeMinor: null, feePaid: false, acceptedTermsId: null })] })] }).verdict).toBe('clear');
  });
});

describe('closed', () => {
  it('given a position inside a no-harvest zone, it is closed, naming the zone and why', () => {
    const answer = check({ position: [-72.85, 43.95] });
    expect(answer).toMatchObject({ verdict: 'closed', species: [] });
    expect(answer.reasons).toEqual(['You are inside the no-harvest zone "Orchid spring" on Birch Hollow: nothing may be taken here (Rare orchids).']);
  });
  it('given a position just outside a zone but within the radius, it is closed too', () => {
    const answer = check({ position: direct([-72.8505, 43.95], 270, 6) });
    expect(answer.verdict).toBe('closed');
    expect(answer.reasons[0]).toContain('You may be inside the no-harvest zone "Orchid spring"');
  });
  it('given a zone and no permit, the zone decides first (DESIGN order) and the missing permit is also said', () => {
    const answer = check({ position: [-72.85, 43.95], forager: june });
    expect(answer.verdict).toBe('closed');
    expect(answer.reasons.at(-1)).toBe('You have no permit here. Ask the landowner from My permits.');
  });
  it('given a date inside a closure, it is closed with the reason and dates', () => {
    const answer = check({ at: new Date('2026-11-20T15:00:00Z') });
    expect(answer).toMatchObject({ verdict: 'closed', permitId: 'p-owen' });
    expect(answer.reasons[0]).toBe('Birch Hollow is closed from Nov 14, 2026 to Nov 30, 2026: Rifle deer season.');
  });
  it('given a closure and no permit, the permit decides first (DESIGN order)', () => {
    expect(check({ at: new Date('2026-11-20T15:00:00Z'), forager: june }).verdict).toBe('no-permit');
  });
  it('given a verdict that is not clear, it does not ask for usage', () => {
    const usage = () => { throw new Error('usage asked for'); };
    expect(check({ at: new Date('2026-11-20T15:00:00Z'), usage }).verdict).toBe('closed');
  });
});

describe('methodAllowed', () => {
  const chanterelle = allowances[0] as AllowanceFacts;
  it('given an allowed method, it allows it', () => {
    expect(methodAllowed(chanterelle, 'cut')).toEqual({ allowed: true });
  });
  it('given a method the landowner does not allow, it says which are allowed', () => {
    expect(methodAllowed(chanterelle, 'dig')).toEqual({
      allowed: false, reason: 'Golden chanterelle may not be taken here by digging roots or bulbs; the landowner allows only cutting above ground or picking.',
    });
  });
});

describe('bad input', () => {
  it('given a negative accuracy or an invalid time, it throws RangeError even with no parcels near', () => {
    expect(() => check({ accuracyM: -1, parcels: [] })).toThrow(RangeError);
    expect(() => check({ at: new Date('not a date'), parcels: [] })).toThrow(RangeError);
  });
});
