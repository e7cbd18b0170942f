import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { sql } from 'drizzle-orm';
import geodesic from 'geographiclib-geodesic';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditTallies } from '../../src/db/audit.queries';
import { closeDb, createDb, type Db } from '../../src/db/client';
import { readDemo, seedDemoIfEmpty } from '../../src/db/demo/seed-demo';
import { listLedger } from '../../src/db/ledger.queries';

const dataDir = fileURLToPath(new URL('../../data', import.meta.url));
type Position = [number, number];
type Feature = { properties: { name: string }; geometry: { type: 'Polygon' | 'MultiPolygon'; coordinates: unknown } };
const readFeatures = (file: string) => (JSON.parse(readFileSync(`${dataDir}/demo/${file}`, 'utf8')) as { features: Feature[] }).features;
const parcelFeatures = readFeatures('parcels.geojson');
const zoneFeatures = readFeatures('zones.geojson');
const speciesCount = (JSON.parse(readFileSync(`${dataDir}/species.json`, 'utf8')) as { species: unknown[] }).species.length;
type Scenario = {
  writtenAsOf: string;
  landownersVerifiedAt: string;
  allowances: { parcelSlug: string; speciesSlug: string; seasons: { start: string; end: string }[] }[];
  visits: { foragerEmail: string; parcelSlug: string; localDate: string; entries: { speciesSlug: string; quantity: string; unit: string; at: string }[] }[];
};
const scenario = JSON.parse(readFileSync(`${dataDir}/demo/scenario.json`, 'utf8')) as Scenario;

/*
 * The demo is written as of `writtenAsOf` and moved, when loaded, by the days between that date and
 * the day it is loaded on its parcels' calendar (America/New_York: every demo parcel's zone), so no
 * demo date is fixed: each is derived here from the files and the day this run is on. That day is
 * read back from what the loader stored: the verified landowners' verification instant is written
 * in scenario.json (`landownersVerifiedAt`) and moved by the same whole days as every other date, so
 * the stored instant minus the written one is the shift, whatever day the database was seeded on.
 */
/** The day the demo was loaded (its "today") and the shift from the day it is written as of; set in beforeAll. */
let demoToday = '';
let shift = 0;
/** A calendar date moved by whole days, on the proleptic Gregorian calendar of ECMAScript's Date (UTC). */
const movedBy = (isoDate: string, days: number) => new Date(Date.parse(`${isoDate}T00:00:00Z`) + days * 86_400_000).toISOString().slice(0, 10);

/** Unsigned geodesic area of one GeoJSON ring ([lon, lat], RFC 7946 §3.1.1 ✔) with GeographicLib, which takes (lat, lon). */
function ringArea(ring: Position[]): number {
  const polygon = geodesic.Geodesic.WGS84.Polygon(false);
  for (const [lon, lat] of ring.slice(0, -1)) polygon.AddPoint(lat, lon); // GeographicLib closes the ring itself
  // Signed, so a clockwise ring is a small negative area rather than the rest of the Earth (REFERENCES §2).
  return Math.abs(polygon.Compute(false, true).area ?? Number.NaN);
}

/** Exterior minus holes, summed over the polygons (RFC 7946 §3.1.6–3.1.7 ✔). */
function geodesicArea(geometry: Feature['geometry']): number {
  const polygons = (geometry.type === 'Polygon' ? [geometry.coordinates] : geometry.coordinates) as Position[][][];
  return polygons.reduce((sum, [exterior = [], ...holes]) => sum + ringArea(exterior) - holes.reduce((h, hole) => h + ringArea(hole), 0), 0);
}

const referenceRing: Position[] = [[-75, 45], [-74.99, 45], [-74.99, 45.01], [-75, 45.01], [-75, 45]];
const referenceRingArea = 876_163.448; // m², REFERENCES §2 ⚙ (GeographicLib)

let db: Db;
const rows = async <T extends Record<string, unknown>>(query: ReturnType<typeof sql>) => [...(await db.execute<T>(query))];

beforeAll(async () => {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error('DATABASE_URL is not set');
  db = createDb(url, { max: 2 });
  const [verified] = await rows<{ at: string }>(sql`select landowner_verified_at::text as at from users where email = 'landowner@example.org'`);
  shift = Math.round((Date.parse(verified?.at ?? '') - Date.parse(scenario.landownersVerifiedAt)) / 86_400_000);
  demoToday = movedBy(scenario.writtenAsOf, shift);
});

afterAll(async () => {
  await closeDb(db);
});

describe('PostGIS against its published behaviour', () => {
  it('given the REFERENCES parcel-sized ring, ST_Area on geography is 876 163.448 m² within 0.1 m² (REFERENCES §2 ⚙ GeographicLib)', async () => {
    const geojson = JSON.stringify({ type: 'Polygon', coordinates: [referenceRing] });
    const [row] = await rows<{ area: number }>(sql`select ST_Area(ST_SetSRID(ST_GeomFromGeoJSON(${geojson}), 4326)::geography) as area`);
    expect(Math.abs((row?.area ?? 0) - referenceRingArea)).toBeLessThan(0.1);
  });

  it('given a point on the edge of a square, ST_Covers says true and ST_Contains false (PostGIS manual, REFERENCES §4 ✔)', async () => {
    const [row] = await rows<{ covers: boolean; contains: boolean }>(sql`
      select ST_Covers(s, p) as covers, ST_Contains(s, p) as contains
      from (select 'POLYGON((0 0,10 0,10 10,0 10,0 0))'::geometry as s, 'POINT(10 5)'::geometry as p) as t`);
    expect(row).toEqual({ covers: true, contains: false });
  });

  it('given a bow-tie polygon, ST_IsValidReason starts with Self-intersection (PostGIS manual, REFERENCES §4 ✔)', async () => {
    const [row] = await rows<{ reason: string }>(sql`select ST_IsValidReason('POLYGON((100 200,100 100,200 200,200 100,100 200))'::geometry) as reason`);
    expect(row?.reason).toMatch(/^Self-intersection/);
  });
});

describe('the seeded demo scenario', () => {
  it('given the reference ring, this file’s GeographicLib helper gives 876 163.448 m² (REFERENCES §2 ⚙), in either orientation', () => {
    expect(Math.abs(ringArea(referenceRing) - referenceRingArea)).toBeLessThan(0.001);
    expect(Math.abs(ringArea([...referenceRing].reverse()) - referenceRingArea)).toBeLessThan(0.001);
  });

  it('given every parcel and zone in data/demo, the database holds them all with valid boundaries', async () => {
    const [counts] = await rows<{ parcels: number; zones: number }>(
      sql`select (select count(*)::int from parcels) as parcels, (select count(*)::int from no_harvest_zones) as zones`,
    );
    expect(counts).toEqual({ parcels: parcelFeatures.length, zones: zoneFeatures.length });
    const invalid = await rows<{ name: string; reason: string }>(sql`
      select name, ST_IsValidReason(boundary) as reason from parcels where not ST_IsValid(boundary)
      union all select name, ST_IsValidReason(boundary) from no_harvest_zones where not ST_IsValid(boundary)`);
    expect(invalid).toEqual([]);
  });

  it.each(parcelFeatures.map((feature): [string, Feature] => [feature.properties.name, feature]))(
    'given the parcel %s, its stored area agrees within 0.1 %% with GeographicLib’s geodesic area (geographiclib-geodesic 2.2.0 ⚙)',
    async (name, feature) => {
      const [row] = await rows<{ area: number }>(sql`select area_m2 as area from parcels where name = ${name}`);
      const expected = geodesicArea(feature.geometry);
      expect(expected).toBeGreaterThan(0);
      expect(Math.abs((row?.area ?? 0) - expected) / expected).toBeLessThan(0.001);
    },
  );

  it('given every no-harvest zone, its parcel covers it', async () => {
    const uncovered = await rows<{ name: string }>(sql`
      select z.name from no_harvest_zones z join parcels p on p.id = z.parcel_id where not ST_Covers(p.boundary, z.boundary)`);
    expect(uncovered).toEqual([]);
  });

  it('given the parcels, one is a MultiPolygon of more than one part and one has a hole', async () => {
    const [row] = await rows<{ multipart: number; holed: number }>(sql`
      select (select count(*)::int from parcels where ST_NumGeometries(boundary) > 1) as multipart,
             (select count(distinct p.id)::int from parcels p, lateral ST_Dump(p.boundary) d where ST_NumInteriorRings(d.geom) > 0) as holed`);
    expect(row?.multipart).toBeGreaterThanOrEqual(1);
    expect(row?.holed).toBeGreaterThanOrEqual(1);
  });

  it('given every pair of parcels, none overlap in area, and at least one pair shares an edge', async () => {
    const pairs = await rows<{ a: string; b: string; dimension: number; area: number }>(sql`
      select a.name as a, b.name as b, ST_Dimension(ST_Intersection(a.boundary, b.boundary)) as dimension,
             ST_Area(ST_Intersection(a.boundary, b.boundary)) as area
      from parcels a join parcels b on a.id < b.id and ST_Intersects(a.boundary, b.boundary)`);
    expect(pairs.filter((pair) => pair.area !== 0)).toEqual([]);
    expect(pairs.some((pair) => pair.dimension === 1)).toBe(true);
  });

  it('given the species catalogue, it has at least 25 species, all of data/species.json, each with a caution', async () => {
    const [row] = await rows<{ n: number; without: number }>(
      sql`select count(*)::int as n, count(*) filter (where cardinality(cautions) = 0)::int as without from species`,
    );
    expect(row?.n).toBeGreaterThanOrEqual(25);
    expect(row?.n).toBe(speciesCount);
    expect(row?.without).toBe(0);
  });

  it('given the permits, they are in at least 5 distinct states', async () => {
    const [row] = await rows<{ states: number }>(sql`select count(distinct state)::int as states from permits`);
    expect(row?.states).toBeGreaterThanOrEqual(5);
  });

  it('given each permit, its history ends in the state the permit is in', async () => {
    const mismatched = await rows<{ id: string }>(sql`
      select p.id from permits p
      where p.state is distinct from (select e.to_state from permit_events e where e.permit_id = p.id order by e.at desc limit 1)`);
    expect(mismatched).toEqual([]);
  });

  it('given the database is already seeded, seedDemoIfEmpty returns false and changes no counts', async () => {
    const countAll = () =>
      rows(sql`select (select count(*)::int from users) as users, (select count(*)::int from parcels) as parcels,
        (select count(*)::int from species) as species, (select count(*)::int from permits) as permits,
        (select count(*)::int from permit_events) as events, (select count(*)::int from clubs) as clubs`);
    const [beforeCounts] = await countAll();
    expect(beforeCounts?.users).toBeGreaterThan(0);
    expect(await seedDemoIfEmpty(db, readDemo(dataDir))).toBe(false);
    expect((await countAll())[0]).toEqual(beforeCounts);
  });
});

describe("the demo club's season on Farrand Sugarbush (data/demo/scenario.json, visits)", () => {
  /*
   * Worked by hand from the demo's visits, counted under the club permit as of the day the demo was
   * loaded (its 2026-12-01, moved): every season of these species had begun or ended by then, as on
   * the day it was written, since the visits and the windows move together. Limits are the parcel's
   * (scenario.json allowances); nearing from 75 % there (parcels.geojson). Percent = used × 100 /
   * limit, rounded half up to one decimal, as the engine does.
   */
  const tallies = async () => {
    const [club] = await rows<{ id: string }>(sql`select id from clubs where slug = 'three-ridges-foragers'`);
    const audit = await auditTallies(db, { clubId: club?.id ?? '' }, { asOf: demoToday });
    return (forager: string, species: string) => {
      const row = audit.rows.find((r) => r.foragerName === forager && r.commonName === species && r.parcelName === 'Farrand Sugarbush');
      return row?.tallies.map((t) => [t.scope, t.used, t.limit.unit, t.percent, t.state]);
    };
  };

  it('given a correction of the same visit, Irene\u2019s chanterelle counts 410 − 60 = 350 g: 70 % of the 500 g visit and day limits, 11.7 % of 3 kg', async () => {
    const of = await tallies();
    // Season: 350 / 3000 = 11.666… % → 11.7 (the digit after the first decimal is 6, so it rounds up).
    // Parcel-season: Beth 320 + 280, Irene 350, Sam 250 = 1200 g = 1.2 kg of 20 kg = 6 %.
    expect(of('Irene Duval', 'Golden chanterelle')).toEqual([
      ['visit', '350', 'g', 70, 'within'],
      ['day', '350', 'g', 70, 'within'],
      ['season', '0.35', 'kg', 11.7, 'within'],
      ['parcel-season', '1.2', 'kg', 6, 'within'],
    ]);
  });

  it('given two visits, Beth\u2019s chanterelle shows the busier (320 g, 64 %) and the season 600 g (20 % of 3 kg)', async () => {
    const of = await tallies();
    // 320 / 500 = 64 %; 600 / 3000 = 20 %: exact, nothing to round.
    expect(of('Beth Lindqvist', 'Golden chanterelle')?.slice(0, 3)).toEqual([
      ['visit', '320', 'g', 64, 'within'],
      ['day', '320', 'g', 64, 'within'],
      ['season', '0.6', 'kg', 20, 'within'],
    ]);
  });

  it('given 1.1 kg of hen-of-the-woods in kilograms, the steward is at 73.3 % of the 1.5 kg day limit, just within the 75 % threshold', async () => {
    const of = await tallies();
    // 1.1 / 1.5 = 0.73333… → 73.3 % (next digit 3, rounds down); of the 6 kg season 18.333… → 18.3 %;
    // parcel-season 0.9 + 1.1 = 2 kg of 25 kg = 8 %.
    expect(of('Marisol Kent', 'Hen of the woods (maitake)')).toEqual([
      ['visit', '1.1', 'kg', 73.3, 'within'],
      ['day', '1.1', 'kg', 73.3, 'within'],
      ['season', '1.1', 'kg', 18.3, 'within'],
      ['parcel-season', '2', 'kg', 8, 'within'],
    ]);
  });
});

describe('the demo moved to the day it is loaded (src/db/demo/shift.ts)', () => {
  it('given the demo loaded, every entry\u2019s stored season occurrence holds the day it counts on, and every correction counts on its root\u2019s day', async () => {
    const [row] = await rows<{ entries: number; outside: number; astray: number }>(sql`
      select count(*)::int as entries,
        count(*) filter (where not (e.season_start <= e.counted_on and e.counted_on <= e.season_end))::int as outside,
        count(*) filter (where e.root_entry_id is not null and e.counted_on <> (select r.counted_on from harvest_entries r where r.id = e.root_entry_id))::int as astray
      from harvest_entries e`);
    // At least the eleven entries of data/demo/scenario.json's visits (one of them Irene's correction);
    // the end-to-end tests, run later on the same database, add their own, which must hold too.
    expect(row?.entries).toBeGreaterThanOrEqual(scenario.visits.reduce((n, v) => n + v.entries.length, 0));
    expect([row?.outside, row?.astray]).toEqual([0, 0]);
  });

  it('given the demo loaded, the ledger counts each chanterelle entry on its visit\u2019s day moved by the shift, in the allowance window 07-01 … 09-30 moved by the shift', async () => {
    const window = scenario.allowances.find((a) => a.parcelSlug === 'farrand-sugarbush' && a.speciesSlug === 'golden-chanterelle')?.seasons;
    expect(window).toEqual([{ start: '07-01', end: '09-30' }]);
    const year = scenario.writtenAsOf.slice(0, 4);
    // Loaded on 2026-12-01 it is the window itself, 2026-07-01 … 2026-09-30; loaded on 2026-12-02 (a shift of +1), 2026-07-02 … 2026-10-01.
    const season = { seasonStart: movedBy(`${year}-07-01`, shift), seasonEnd: movedBy(`${year}-09-30`, shift) };
    const [chanterelle] = await rows<{ id: string }>(sql`select id from species where slug = 'golden-chanterelle'`);
    const expected = scenario.visits
      .filter((v) => v.parcelSlug === 'farrand-sugarbush')
      .flatMap((v) => v.entries.filter((e) => e.speciesSlug === 'golden-chanterelle').map((e) => [v.foragerEmail, movedBy(v.localDate, shift), e.quantity]));
    expect(expected.length).toBe(5);
    const found: (string | undefined)[][] = [];
    for (const email of [...new Set(expected.map(([email]) => email ?? ''))]) {
      const [person] = await rows<{ id: string }>(sql`select id from users where email = ${email}`);
      const ledger = await listLedger(db, { foragerId: person?.id ?? '', filters: { speciesId: chanterelle?.id ?? '' } });
      for (const entry of ledger) {
        expect({ seasonStart: entry.seasonStart, seasonEnd: entry.seasonEnd }).toEqual(season);
        found.push([email, entry.countedOn, entry.quantities[0]?.quantity]);
      }
    }
    const order = (list: (string | undefined)[][]) => list.map((x) => x.join(' ')).sort();
    expect(order(found)).toEqual(order(expected));
  });
});
