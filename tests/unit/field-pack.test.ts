import geodesic from 'geographiclib-geodesic';
import { describe, expect, it } from 'vitest';
import type { AllowanceFacts, LonLat, MultiPolygon, ParcelFacts, PermitFacts } from '../../src/lib/field';
import { offlineCheckIn, offlineUsage, packCaveats, packMaxAgeDays, packTiles, type CountedEntry, type FieldPack } from '../../src/lib/field/pack';

/*
 * Small hand-made packs in an invented valley near 43.9°N, 72.9°W, all in America/New_York, which
 * keeps EST, UTC−5, in December (IANA tz data; 15 U.S.C. 260a, REFERENCES §6): the pack is made at
 * 2026-12-01T17:00Z, which is noon on 2026-12-01 there.
 *
 * Birch Hollow (personal permit of Owen) has a hole, the cut-out, and a no-harvest zone, the heron
 * pond; Maple Run, east of it, is open to Owen under his club's permit, which ends on 2026-12-03.
 * Chaga's season is 11-01…03-15, so it crosses New Year: the season of 2026-12-01 runs from
 * 2026-11-01 to 2027-03-15, and the next one starts 2027-11-01.
 */
const box = (west: number, south: number, east: number, north: number): number[][] => [[west, south], [east, south], [east, north], [west, north], [west, south]];
const polygon = (...rings: number[][][]): MultiPolygon => ({ type: 'MultiPolygon', coordinates: [rings] });

const owen = { id: 'owen', clubIds: ['three-ridges'] };
const permit = (over: Partial<PermitFacts> = {}): PermitFacts => ({
  id: 'p-owen', holderUserId: 'owen', holderClubId: null, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31',
  feeMinor: 2500, feePaid: true, acceptedTermsId: 'terms-birch', ...over,
});
const clubPermit = permit({ id: 'p-club', holderUserId: null, holderClubId: 'three-ridges', endsOn: '2026-12-03', feeMinor: 0, acceptedTermsId: null });
/** Limits in grams and kilograms: visit and day 500 g, season 1.5 kg, everyone 6 kg, the club 3 kg (only under a club permit). */
const chaga: AllowanceFacts = {
  speciesId: 'chaga', commonName: 'Chaga', scientificName: 'Inonotus obliquus', seasons: [{ start: '11-01', end: '03-15' }], methods: ['cut'],
  limits: [
    { scope: 'visit', quantity: '500', unit: 'g', permitId: null },
    { scope: 'day', quantity: '500', unit: 'g', permitId: null },
    { scope: 'season', quantity: '1.5', unit: 'kg', permitId: null },
    { scope: 'parcel-season', quantity: '6', unit: 'kg', permitId: null },
    { scope: 'club-season', quantity: '3', unit: 'kg', permitId: null },
  ],
  cautions: ['Take no more than a third of a conk.'], lookalikes: [],
};
const birch = (over: Partial<ParcelFacts> = {}): ParcelFacts => ({
  id: 'birch', name: 'Birch Hollow', timeZone: 'America/New_York', nearingThresholdPercent: 90,
  // The cut-out: 0.002° × 0.001°, about 160 m × 111 m, in the middle of the parcel.
  boundary: polygon(box(-72.904, 43.898, -72.896, 43.902), box(-72.901, 43.8995, -72.899, 43.9005)),
  zones: [{ id: 'z-heron', name: 'Heron pond', reason: 'Nesting herons.', boundary: polygon(box(-72.8975, 43.8985, -72.8965, 43.8995)) }],
  closures: [], hazards: [{ kind: 'terrain', title: 'Wet ledges', detail: 'Slippery after rain.' }],
  currentTermsId: 'terms-birch', permits: [permit()], allowances: [chaga], ...over,
});
const maple = (): ParcelFacts => ({
  id: 'maple', name: 'Maple Run', timeZone: 'America/New_York', nearingThresholdPercent: 80,
  boundary: polygon(box(-72.894, 43.898, -72.886, 43.902)), zones: [], closures: [], hazards: [], currentTermsId: null,
  // An older club permit, over before the pack was made, is not news.
  permits: [clubPermit, permit({ id: 'p-club-2025', holderUserId: null, holderClubId: 'three-ridges', state: 'expired', startsOn: '2025-05-01', endsOn: '2025-10-31', feeMinor: 0, acceptedTermsId: null })],
  allowances: [chaga],
});

const asOf = '2026-12-01T17:00:00.000Z';
const pack = (over: Partial<FieldPack> = {}, parcels: ParcelFacts[] = [birch(), maple()]): FieldPack => ({
  format: 1, asOf, forager: owen, parcels, usable: parcels.length,
  usage: {
    birch: { chaga: { mass: { visit: '300', day: '300', season: '900', 'parcel-season': '2000', 'club-season': {} } } },
    maple: { chaga: { mass: { visit: '0', day: '0', season: '200', 'parcel-season': '1000', 'club-season': { 'three-ridges': '700' } } } },
  },
  usageDay: { birch: '2026-12-01', maple: '2026-12-01' },
  terms: { birch: { version: 1, body: 'Close gates.' }, maple: null },
  ...over,
});
const counted = (over: Partial<CountedEntry> = {}): CountedEntry => ({ parcelId: 'birch', speciesId: 'chaga', localDate: '2026-12-01', clubId: null, bases: { mass: '150' }, ...over });

const inBirch: LonLat = [-72.903, 43.899]; // about 80 m from the west edge, 111 m from the south edge
const inHole: LonLat = [-72.9, 43.9]; // the middle of the cut-out
const inZone: LonLat = [-72.897, 43.899]; // the middle of the heron pond
const inMaple: LonLat = [-72.89, 43.9];
const noon = new Date(asOf);
const day = 86_400_000;
const after = (ms: number) => new Date(noon.getTime() + ms);

describe('offlineUsage: the visit and day totals', () => {
  it('given the pack’s own local day, it keeps the pack’s visit, day and season totals', () => {
    expect(offlineUsage(pack(), 'birch', '2026-12-01', []).chaga?.mass).toEqual({ visit: '300', day: '300', season: '900', 'parcel-season': '2000', 'club-season': {} });
  });
  it('given the next day, it drops the visit and day totals and keeps the season’s', () => {
    const mass = offlineUsage(pack(), 'birch', '2026-12-02', []).chaga?.mass;
    expect(mass?.visit).toBeUndefined();
    expect(mass?.day).toBeUndefined();
    expect(mass).toMatchObject({ season: '900', 'parcel-season': '2000' });
  });
  it('given a parcel whose pack day is another, it drops that parcel’s day totals only', () => {
    const usage = pack({ usageDay: { birch: '2026-11-30', maple: '2026-12-01' } });
    expect(offlineUsage(usage, 'birch', '2026-12-01', []).chaga?.mass?.day).toBeUndefined();
    expect(offlineUsage(usage, 'maple', '2026-12-01', []).chaga?.mass?.day).toBe('0');
  });
});

describe('offlineUsage: the season totals', () => {
  it('given a later day of the same season across New Year (chaga 11-01…03-15), it keeps the season, parcel-season and club-season totals', () => {
    for (const date of ['2027-01-10', '2027-03-15']) {
      const mass = offlineUsage(pack(), 'maple', date, []).chaga?.mass;
      expect(mass).toMatchObject({ season: '200', 'parcel-season': '1000', 'club-season': { 'three-ridges': '700' } });
      expect(mass?.day).toBeUndefined();
    }
  });
  it('given a day out of season, or in the next season occurrence, it drops every season total', () => {
    for (const date of ['2027-03-16', '2027-11-01']) {
      const mass = offlineUsage(pack(), 'maple', date, []).chaga?.mass;
      expect(mass?.season).toBeUndefined();
      expect(mass?.['parcel-season']).toBeUndefined();
      expect(mass?.['club-season']).toEqual({});
    }
  });
});

describe('offlineUsage: entries counted on the device', () => {
  it('given a queued 150 g on the pack’s day, it adds it to the visit, day, season and parcel-season', () => {
    expect(offlineUsage(pack(), 'birch', '2026-12-01', [counted()]).chaga?.mass).toEqual({ visit: '450', day: '450', season: '1050', 'parcel-season': '2150', 'club-season': {} });
  });
  it('given a queued entry on the next day, that day counts only it, and the season counts both', () => {
    const mass = offlineUsage(pack(), 'birch', '2026-12-02', [counted(), counted({ localDate: '2026-12-02', bases: { mass: '40' } })]).chaga?.mass;
    expect(mass).toEqual({ visit: '40', day: '40', season: '1090', 'parcel-season': '2190', 'club-season': {} });
  });
  it('given a queued entry of the previous season occurrence, it counts it nowhere in the next one', () => {
    const mass = offlineUsage(pack(), 'birch', '2027-11-05', [counted(), counted({ localDate: '2027-11-05', bases: { mass: '25' } })]).chaga?.mass;
    expect(mass).toEqual({ visit: '25', day: '25', season: '25', 'parcel-season': '25', 'club-season': {} });
  });
  it('given a queued entry under the club’s permit, it adds it to that club’s season as well, and an entry with no club to none', () => {
    const entries = [counted({ parcelId: 'maple', clubId: 'three-ridges', bases: { mass: '250' } }), counted({ parcelId: 'maple', bases: { mass: '10' } })];
    expect(offlineUsage(pack(), 'maple', '2026-12-01', entries).chaga?.mass).toEqual({ visit: '260', day: '260', season: '460', 'parcel-season': '1260', 'club-season': { 'three-ridges': '950' } });
  });
  it('given a queued entry on another parcel, it does not count here', () => {
    expect(offlineUsage(pack(), 'maple', '2026-12-01', [counted()]).chaga?.mass).toMatchObject({ day: '0', season: '200' });
  });
  it('given a queued entry of a species the pack had nothing of, it starts that species’ totals', () => {
    const usage = offlineUsage(pack({ usage: { birch: {}, maple: {} } }), 'birch', '2026-12-01', [counted()]);
    expect(usage.chaga?.mass).toEqual({ visit: '150', day: '150', season: '150', 'parcel-season': '150', 'club-season': {} });
  });
});

describe('offlineCheckIn', () => {
  const at = (position: LonLat, over: Partial<Parameters<typeof offlineCheckIn>[1]> = {}, fieldPack = pack()) =>
    offlineCheckIn(fieldPack, { position, accuracyM: 10, at: noon, counted: [], ...over });

  it('given a position well inside Birch Hollow, it is clear under Owen’s permit, with the hazards and no caveats', () => {
    const answer = at(inBirch);
    expect(answer).toMatchObject({ verdict: 'clear', permitId: 'p-owen', parcel: { id: 'birch', name: 'Birch Hollow' }, localDate: '2026-12-01', caveats: [] });
    expect(answer.hazards).toEqual([{ kind: 'terrain', title: 'Wet ledges', detail: 'Slippery after rain.' }]);
    expect(answer.reasons[0]).toBe('You may harvest on Birch Hollow under your permit, which runs until Dec 31, 2026.');
  });
  it('given the pack’s 300 g of the 500 g day limit and a queued 150 g, the tallies say 450 g used: 90 %, nearing at the parcel’s 90 % threshold', () => {
    const [species] = at(inBirch, { counted: [counted()] }).species;
    // 450 / 500 = 90 %; season 900 + 150 = 1050 g = 1.05 kg of 1.5 kg = 70 %; everyone 2150 g of 6 kg = 35.833… % → 35.8.
    // No club-season tally: the permit in force is Owen's own.
    expect(species?.tallies.map((t) => [t.scope, t.used, t.limit.unit, t.remaining, t.percent, t.state])).toEqual([
      ['visit', '450', 'g', '50', 90, 'nearing'],
      ['day', '450', 'g', '50', 90, 'nearing'],
      ['season', '1.05', 'kg', '0.45', 70, 'within'],
      ['parcel-season', '2.15', 'kg', '3.85', 35.8, 'within'],
    ]);
    expect(species?.state).toBe('nearing');
  });
  it('given the same 450 g on a parcel whose threshold is 91 %, it is within; without the queued entry 300 g is 60 %', () => {
    const stricter = pack({}, [birch({ nearingThresholdPercent: 91 }), maple()]);
    expect(at(inBirch, { counted: [counted()] }, stricter).species[0]?.tallies[1]).toMatchObject({ scope: 'day', used: '450', percent: 90, state: 'within' });
    expect(at(inBirch).species[0]?.tallies[1]).toMatchObject({ scope: 'day', used: '300', percent: 60, state: 'within' });
  });
  it('given the next day, the pack’s 300 g no longer counts towards the day: only the day’s queued entry does', () => {
    const answer = at(inBirch, { at: after(day), counted: [counted(), counted({ localDate: '2026-12-02', bases: { mass: '100' } })] });
    expect(answer.localDate).toBe('2026-12-02');
    expect(answer.species[0]?.tallies.map((t) => [t.scope, t.used])).toEqual([['visit', '100'], ['day', '100'], ['season', '1.15'], ['parcel-season', '2.25']]);
  });
  it('given Maple Run under the club’s permit, the queued club entry counts in the club’s season: 700 + 250 g of 3 kg', () => {
    const answer = at(inMaple, { counted: [counted({ parcelId: 'maple', clubId: 'three-ridges', bases: { mass: '250' } })] });
    expect(answer).toMatchObject({ verdict: 'clear', permitId: 'p-club' });
    expect(answer.reasons[0]).toBe("You may harvest on Maple Run under your club's permit, which runs until Dec 3, 2026.");
    // 950 / 3000 = 31.666… % → 31.7 (half up, one decimal).
    expect(answer.species[0]?.tallies.at(-1)).toMatchObject({ scope: 'club-season', used: '0.95', remaining: '2.05', percent: 31.7, state: 'within' });
  });
  it('given a position in the middle of the cut-out, it is outside, says it is a part of Birch Hollow that is not included, and how far its edge is', () => {
    const answer = at(inHole);
    expect(answer).toMatchObject({ verdict: 'outside', parcel: null, permitId: null, species: [], hazards: [], caveats: [] });
    // The hole's north and south edges are 0.0005° of latitude away: 55.56 m (geographiclib-geodesic 2.2.0 ⚙, WGS84).
    const edge = geodesic.Geodesic.WGS84.Inverse(43.9, -72.9, 43.9005, -72.9).s12 ?? Number.NaN;
    expect(edge).toBeGreaterThan(55.5);
    expect(edge).toBeLessThan(55.6);
    expect(answer.reasons).toEqual([
      'You are in a part of Birch Hollow that is not included: the parcel leaves this piece out, so nothing here is covered by a permit.',
      'The nearest is Birch Hollow, about 56 m away.',
      'The land may still belong to someone: ask before you pick.',
    ]);
  });
  it('given a position away from both parcels, it is outside with the general sentence, not the cut-out one', () => {
    expect(at([-72.91, 43.9]).reasons[0]).toBe('You are not on any parcel open to you in Tallywood, so nothing here is covered by a permit.');
  });
  it('given a position in the heron pond, it is closed, naming the zone and why, with the permit it holds', () => {
    const answer = at(inZone);
    expect(answer).toMatchObject({ verdict: 'closed', permitId: 'p-owen', parcel: { id: 'birch' }, species: [] });
    expect(answer.reasons).toEqual(['You are inside the no-harvest zone "Heron pond" on Birch Hollow: nothing may be taken here (Nesting herons).']);
  });
});

describe('packCaveats', () => {
  const ageCaveat = (days: number) =>
    `Your field pack is ${days} days old: permits, closures and other people's harvests may have changed since. Refresh it when you have signal.`;
  it('given the pack’s own age limit, it is 7 days', () => {
    expect(packMaxAgeDays).toBe(7);
  });
  it('given a pack 6 days old, or a millisecond short of 7, it says nothing about its age', () => {
    expect(offlineCheckIn(pack(), { position: inBirch, accuracyM: 10, at: after(6 * day), counted: [] }).caveats).toEqual([]);
    expect(offlineCheckIn(pack(), { position: inBirch, accuracyM: 10, at: after(7 * day - 1), counted: [] }).caveats).toEqual([]);
  });
  it('given a pack 7 days old, and 10, it says how old it is', () => {
    expect(offlineCheckIn(pack(), { position: inBirch, accuracyM: 10, at: after(7 * day), counted: [] }).caveats).toEqual([ageCaveat(7)]);
    expect(offlineCheckIn(pack(), { position: inBirch, accuracyM: 10, at: after(10 * day), counted: [] }).caveats).toEqual([ageCaveat(10)]);
  });
  it('given an answer with no parcel, it still says how old the pack is', () => {
    const answer = offlineCheckIn(pack(), { position: inHole, accuracyM: 10, at: after(8 * day), counted: [] });
    expect(packCaveats(pack(), answer, after(8 * day))).toEqual([ageCaveat(8)]);
  });
  it('given the club’s permit ended (Dec 3) after the pack was made (Dec 1), it names it on Dec 4, and not the permit that had ended before', () => {
    const answer = offlineCheckIn(pack(), { position: inMaple, accuracyM: 10, at: new Date('2026-12-04T17:00:00Z'), counted: [] });
    expect(answer.verdict).toBe('no-permit');
    expect(answer.caveats).toEqual(['A permit in your field pack for Maple Run ended on Dec 3, 2026.']);
  });
  it('given 23:30 on Dec 3 in New York, already Dec 4 in UTC (EST, UTC−5), the permit has not ended yet', () => {
    const answer = offlineCheckIn(pack(), { position: inMaple, accuracyM: 10, at: new Date('2026-12-04T04:30:00Z'), counted: [] });
    expect(answer).toMatchObject({ verdict: 'clear', localDate: '2026-12-03', caveats: [] });
  });
});

describe('packTiles', () => {
  /*
   * Expected tiles worked out from the formulas of the OpenStreetMap wiki's "Slippy map tilenames"
   * page (Web Mercator, EPSG:3857): n = 2^z, x = floor((lon + 180) / 360 · n),
   * y = floor((1 − asinh(tan φ) / π) / 2 · n). The parcels span 72.904°W…72.886°W, 43.898°N…43.902°N.
   * At z 13 (n = 8192), the north-west corner (−72.904, 43.902):
   *   x = 107.096 / 360 · 8192 = 2437.03 → 2437;
   *   tan 43.902° = 0.962389, asinh = 0.854527, / π = 0.272004, (1 − 0.272004) / 2 · 8192 = 2981.87 → 2981.
   * The south-east corner (−72.886, 43.898) falls in the same tile (x 2437.44, y 2981.997), so with a
   * margin of one tile z 13 is x 2436…2438, y 2980…2982: 9 tiles. The same formulas give 9 tiles at
   * z 14, 12 at z 15 (x 9747…9750), 24 at z 16 and 50 at z 17 (x 38991…39000, y 47708…47712): 104.
   */
  const z13 = [2436, 2437, 2438].flatMap((x) => [2980, 2981, 2982].map((y) => ({ z: 13, x, y })));

  it('given the two parcels at z 13, it is the 3 × 3 tiles around the one holding both corners', () => {
    expect(packTiles(pack(), [13])).toEqual(expect.arrayContaining(z13));
    expect(packTiles(pack(), [13])).toHaveLength(9);
  });
  it('given every zoom from 13 to 17, it covers the bounding box at each: 9, 9, 12, 24 and 50 tiles', () => {
    const tiles = packTiles(pack());
    const count = (z: number) => tiles.filter((t) => t.z === z).length;
    expect([13, 14, 15, 16, 17].map(count)).toEqual([9, 9, 12, 24, 50]);
    expect(tiles).toHaveLength(104);
    const at17 = tiles.filter((t) => t.z === 17);
    expect([Math.min(...at17.map((t) => t.x)), Math.max(...at17.map((t) => t.x)), Math.min(...at17.map((t) => t.y)), Math.max(...at17.map((t) => t.y))]).toEqual([38991, 39000, 47708, 47712]);
    expect(new Set(tiles.map((t) => `${t.z}/${t.x}/${t.y}`)).size).toBe(104);
  });
  it('given a cap of 20, it stops at 20, coarse zooms first: all of z 13 and z 14, then two of z 15, none finer', () => {
    const tiles = packTiles(pack(), [17, 16, 15, 14, 13], 20);
    expect(tiles).toHaveLength(20);
    expect(tiles.map((t) => t.z)).toEqual([...Array(9).fill(13), ...Array(9).fill(14), 15, 15]);
    expect(tiles.slice(0, 9)).toEqual(expect.arrayContaining(z13));
  });
  it('given two parcels a degree of longitude apart, it loads only the tiles around each, not the box between them', () => {
    // By the same formulas at z 13: −71.904° and −71.896° give x 2459.79 and 2459.97, so the far
    // parcel lies in tile x 2459 (y 2981 as above): 3 × 3 tiles around each, 18 in all, where the
    // box between them would be 25 tiles wide.
    const far = { ...maple(), id: 'far', boundary: polygon(box(-71.904, 43.898, -71.896, 43.902)) };
    const tiles = packTiles(pack({}, [birch(), far]), [13]);
    expect(tiles).toHaveLength(18);
    expect([...new Set(tiles.map((t) => t.x))].sort()).toEqual([2436, 2437, 2438, 2458, 2459, 2460]);
  });
  it('given a pack with no parcels, it needs no tiles', () => {
    expect(packTiles({ parcels: [] })).toEqual([]);
  });
});
