import { readdirSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { sql } from 'drizzle-orm';
import geodesic from 'geographiclib-geodesic';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  findOverlaps, inspectBoundary, validateBoundaryForSave, validateZoneForSave, zoneWithinParcel,
} from '../../src/db/boundaries.queries';
import { closeDb, createDb, type Db } from '../../src/db/client';
import { parseBoundaryFile } from '../../src/lib/boundaries/parse';
import { problemFromPostgis } from '../../src/lib/boundaries/postgis-reasons';
import type { BoundaryGeometry } from '../../src/lib/boundaries/types';
import { checkBoundary, mergeFeatures } from '../../src/lib/boundaries/validate';

// Read-only against the seeded dev or test database: nothing here writes.
const fixtures = fileURLToPath(new URL('../fixtures/boundaries', import.meta.url));
const folder = (name: string) => readdirSync(`${fixtures}/${name}`).sort();
function boundaryOf(path: string): BoundaryGeometry {
  const result = parseBoundaryFile(readFileSync(`${fixtures}/${path}`, 'utf8'), path);
  if (!result.ok) throw new Error(`${path} does not parse`);
  const [only, ...more] = result.features;
  return more.length === 0 && only ? only.geometry : mergeFeatures(result.features);
}

/**
 * Invalid fixtures PostGIS does not judge invalid, and why: its geometry type is planar, so ST_IsValid
 * knows nothing of degree ranges, the antimeridian or our size cap. Our pure checks exist for these.
 */
const notJudgedByPostgis: Record<string, string> = {
  'out-of-range.geojson': 'ST_IsValid does not check longitude/latitude ranges (RFC 7946 §4 is ours to enforce)',
  'swapped-lat-lon.geojson': '[lat, lon] is a valid planar polygon; only the range says it is swapped (RFC 7946 §3.1.1)',
  'crosses-antimeridian.geojson': 'a ring the long way round the globe is a valid planar polygon (RFC 7946 §3.1.9)',
  'too-large.geojson': 'the 10 000 ha cap is a policy, not validity',
};

type Position = [number, number];
/** Unsigned geodesic area of one ring with GeographicLib (geographiclib-geodesic 2.2.0), which takes (lat, lon). */
function ringArea(ring: Position[]): number {
  const polygon = geodesic.Geodesic.WGS84.Polygon(false);
  for (const [lon, lat] of ring.slice(0, -1)) polygon.AddPoint(lat, lon);
  return Math.abs(polygon.Compute(false, true).area ?? Number.NaN); // signed, so either winding works (REFERENCES §2)
}
const geodesicArea = (geometry: BoundaryGeometry) =>
  ((geometry.type === 'Polygon' ? [geometry.coordinates] : geometry.coordinates) as Position[][][]).reduce(
    (sum, [exterior = [], ...holes]) => sum + ringArea(exterior) - holes.reduce((h, hole) => h + ringArea(hole), 0),
    0,
  );

let db: Db;
const rows = async <T extends Record<string, unknown>>(query: ReturnType<typeof sql>) => [...(await db.execute<T>(query))];
type DemoParcel = { id: string; ownerId: string; name: string; areaM2: number; boundary: BoundaryGeometry };
let demo: DemoParcel;

beforeAll(async () => {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error('DATABASE_URL is not set');
  db = createDb(url, { max: 2 });
  const [row] = await rows<{ id: string; owner_id: string; name: string; area_m2: number; boundary: string }>(
    sql`select id, owner_id, name, area_m2, ST_AsGeoJSON(boundary) as boundary from parcels where status <> 'archived' order by name limit 1`,
  );
  if (!row) throw new Error('the database has no demo parcels; run the seed first');
  demo = { id: row.id, ownerId: row.owner_id, name: row.name, areaM2: row.area_m2, boundary: JSON.parse(row.boundary) as BoundaryGeometry };
});

afterAll(async () => {
  await closeDb(db);
});

/** A square of ±`d` degrees round a vertex of the demo parcel: it overlaps that parcel. */
const squareRoundAVertex = (d = 0.001): BoundaryGeometry => {
  const [lon, lat] = (demo.boundary.coordinates as number[][][][])[0]?.[0]?.[0] as Position;
  return { type: 'Polygon', coordinates: [[[lon - d, lat - d], [lon + d, lat - d], [lon + d, lat + d], [lon - d, lat + d], [lon - d, lat - d]]] };
};

describe('our pure verdict against PostGIS ST_IsValid', () => {
  it.each(folder('valid'))('given valid/%s, both find it valid', async (file) => {
    const geometry = boundaryOf(`valid/${file}`);
    expect(checkBoundary(geometry).problems).toEqual([]);
    expect(await inspectBoundary(db, geometry)).toMatchObject({ valid: true, reason: null, location: null });
  });

  it.each(folder('invalid').filter((file) => !(file in notJudgedByPostgis)))('given invalid/%s, both find it invalid', async (file) => {
    const geometry = boundaryOf(`invalid/${file}`);
    expect(checkBoundary(geometry).problems.length).toBeGreaterThan(0);
    const inspected = await inspectBoundary(db, geometry);
    expect(inspected.valid).toBe(false);
    expect(inspected.reason).toEqual(expect.any(String));
  });

  it.each(Object.entries(notJudgedByPostgis))('given invalid/%s, PostGIS calls it valid because %s; our check refuses it', async (file) => {
    const geometry = boundaryOf(`invalid/${file}`);
    expect((await inspectBoundary(db, geometry)).valid).toBe(true);
    expect(checkBoundary(geometry).problems.length).toBeGreaterThan(0);
  });

  it('given the bow-tie, the reason starts with Self-intersection (REFERENCES §4 ✔) and the location is the crossing, the image of (150 150)', async () => {
    const inspected = await inspectBoundary(db, boundaryOf('invalid/bow-tie.geojson'));
    expect(inspected.reason).toMatch(/^Self-intersection/);
    expect(inspected.location?.[0]).toBeCloseTo(-72.855, 9);
    expect(inspected.location?.[1]).toBeCloseTo(43.945, 9);
    const problem = problemFromPostgis(inspected.reason ?? '', inspected.location);
    expect(problem.message).toMatch(/^Ring crosses itself near 43\.94500°N, 72\.85500°W; redraw that corner \(PostGIS: Self-intersection/);
  });
});

describe('inspectBoundary', () => {
  it('given the REFERENCES §2 parcel-sized ring, its area is 876 163.448 m² within 0.5 m² (⚙ GeographicLib)', async () => {
    const { areaM2, vertexCount } = await inspectBoundary(db, { type: 'Polygon', coordinates: [[[-75, 45], [-74.99, 45], [-74.99, 45.01], [-75, 45.01], [-75, 45]]] });
    expect(Math.abs(areaM2 - 876_163.448)).toBeLessThan(0.5);
    expect(vertexCount).toBe(5);
  });

  it.each(folder('valid'))('given valid/%s, its area agrees with GeographicLib’s Polygon area within 0.1 %% (geographiclib-geodesic 2.2.0 ⚙)', async (file) => {
    const geometry = boundaryOf(`valid/${file}`);
    const expected = geodesicArea(geometry);
    expect(expected).toBeGreaterThan(0);
    const { areaM2 } = await inspectBoundary(db, geometry);
    expect(Math.abs(areaM2 - expected) / expected).toBeLessThan(0.001);
  });

  it.each([
    ['a type PostGIS does not know', { type: 'Banana', coordinates: [] }],
    ['coordinates that are not a list', { type: 'Polygon', coordinates: 'north of the brook' }],
    ['a string that is not JSON', 'not json'],
  ])('given %s, it answers invalid with a readable reason instead of throwing', async (_, geometry) => {
    const inspected = await inspectBoundary(db, geometry);
    expect(inspected).toMatchObject({ valid: false, location: null, areaM2: 0, vertexCount: 0 });
    expect(inspected.reason).toMatch(/^PostGIS cannot read this GeoJSON: /);
  });

  it('given an unreadable GeoJSON inside a transaction, the transaction stays usable', async () => {
    const after = await db.transaction(async (tx) => {
      await inspectBoundary(tx, { type: 'Banana' });
      return (await inspectBoundary(tx, boundaryOf('valid/square.geojson'))).valid;
    });
    expect(after).toBe(true);
  });

  it('given a Point, it answers that it is not an area', async () => {
    expect(await inspectBoundary(db, { type: 'Point', coordinates: [-72.85, 43.95] })).toMatchObject({ valid: false, reason: expect.stringMatching(/^Not an area/) });
  });
});

describe('findOverlaps and zoneWithinParcel on the seeded parcels', () => {
  it('given a square round a vertex of a demo parcel and another owner, it says only that other land is there: no name, id, area or boundary', async () => {
    expect(await findOverlaps(db, { geometry: squareRoundAVertex(), ownerId: 'someone-else' })).toEqual({ own: [], othersLand: true });
  });

  it('given the same square and the parcel’s own owner, it names that parcel with a positive overlap and no boundary', async () => {
    const { own } = await findOverlaps(db, { geometry: squareRoundAVertex(), ownerId: demo.ownerId });
    const hit = own.find((parcel) => parcel.parcelId === demo.id);
    expect(hit).toEqual({ parcelId: demo.id, name: demo.name, overlapM2: expect.any(Number) });
    expect(hit?.overlapM2).toBeGreaterThan(1);
    for (const parcel of own) expect(Object.keys(parcel).sort()).toEqual(['name', 'overlapM2', 'parcelId']);
  });

  it('given a parcel’s own boundary, its owner and its id to leave out, it finds nothing', async () => {
    expect(await findOverlaps(db, { geometry: demo.boundary, ownerId: demo.ownerId, excludeParcelId: demo.id })).toEqual({ own: [], othersLand: false });
  });

  it('given the boundary of a demo parcel that shares an edge with a neighbour, it does not count the neighbour (no area in common)', async () => {
    const [pair] = await rows<{ id: string; owner_id: string; boundary: string; neighbour: string }>(sql`
      select a.id, a.owner_id, ST_AsGeoJSON(a.boundary) as boundary, b.id as neighbour from parcels a join parcels b
        on a.id <> b.id and ST_Intersects(a.boundary, b.boundary) and ST_Dimension(ST_Intersection(a.boundary, b.boundary)) = 1
      limit 1`);
    if (!pair) throw new Error('the demo data has no parcels sharing an edge (demo-data.test.ts expects one)');
    expect(await findOverlaps(db, { geometry: JSON.parse(pair.boundary), ownerId: 'someone-else', excludeParcelId: pair.id })).toEqual({ own: [], othersLand: false });
    expect(await findOverlaps(db, { geometry: JSON.parse(pair.boundary), ownerId: pair.owner_id, excludeParcelId: pair.id })).toEqual({ own: [], othersLand: false });
  });

  it('given excludeParcelId, it leaves that parcel out for its owner', async () => {
    const { own } = await findOverlaps(db, { geometry: squareRoundAVertex(), ownerId: demo.ownerId, excludeParcelId: demo.id });
    expect(own.map((parcel) => parcel.parcelId)).not.toContain(demo.id);
  });

  it('given a square inside the seeded draft of an unverified landowner and another owner, it finds nothing', async () => {
    const [draft] = await rows<{ inside: string }>(sql`select ST_AsGeoJSON(ST_Buffer(ST_PointOnSurface(boundary), 0.0002, 1)) as inside from parcels where status = 'draft' limit 1`);
    if (!draft) throw new Error('the demo data has no draft parcel');
    expect(await findOverlaps(db, { geometry: JSON.parse(draft.inside), ownerId: 'someone-else' })).toEqual({ own: [], othersLand: false });
  });

  it('given each seeded no-harvest zone, zoneWithinParcel says its parcel covers it; a square round a parcel corner is not within', async () => {
    const zones = await rows<{ parcel_id: string; zone: string }>(sql`select parcel_id, ST_AsGeoJSON(boundary) as zone from no_harvest_zones`);
    expect(zones.length).toBeGreaterThan(0);
    for (const { parcel_id: parcelId, zone } of zones) expect(await zoneWithinParcel(db, { zone: JSON.parse(zone), parcelId })).toBe(true);
    expect(await zoneWithinParcel(db, { zone: squareRoundAVertex(), parcelId: demo.id })).toBe(false);
    expect(await zoneWithinParcel(db, { zone: squareRoundAVertex(), parcelId: 'not-a-uuid' })).toBe(false);
  });
});

describe('validateBoundaryForSave and validateZoneForSave', () => {
  it('given the bow-tie, it refuses it with the pure check’s self-intersection before asking PostGIS', async () => {
    const verdict = await validateBoundaryForSave(db, boundaryOf('invalid/bow-tie.geojson'), { ownerId: 'someone-else' });
    expect(verdict).toMatchObject({ ok: false, problems: [{ code: 'self-intersection' }] });
  });

  it('given a square over a demo parcel of another owner, it accepts it with an overlap warning that names no parcel', async () => {
    const verdict = await validateBoundaryForSave(db, squareRoundAVertex(), { ownerId: 'someone-else' });
    if (!verdict.ok) throw new Error(JSON.stringify(verdict.problems));
    expect(verdict.areaM2).toBeGreaterThan(0);
    expect(verdict.warnings).toEqual([{ code: 'overlap', message: expect.stringContaining('overlaps land registered by someone else') }]);
    expect(JSON.stringify(verdict.warnings)).not.toContain(demo.name);
  });

  it('given a demo parcel’s own boundary for its owner, it accepts it without warnings at the area stored for it', async () => {
    const verdict = await validateBoundaryForSave(db, demo.boundary, { ownerId: demo.ownerId, excludeParcelId: demo.id });
    if (!verdict.ok) throw new Error(JSON.stringify(verdict.problems));
    expect(verdict.warnings).toEqual([]);
    expect(Math.abs(verdict.areaM2 - demo.areaM2) / demo.areaM2).toBeLessThan(1e-9);
    expect(verdict.boundary.type).toBe('MultiPolygon');
  });

  it('given a zone that reaches outside its parcel, it refuses it as zone-outside-parcel and points at ground outside', async () => {
    const verdict = await validateZoneForSave(db, squareRoundAVertex(), { parcelId: demo.id });
    expect(verdict).toMatchObject({ ok: false, problems: [{ code: 'zone-outside-parcel', at: expect.any(Array) }] });
  });
});
