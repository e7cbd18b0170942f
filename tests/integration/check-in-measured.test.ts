import { sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, createDb, type Db } from '../../src/db/client';
import { loadMeasuredParcelsNear } from '../../src/db/field.queries';
import { boundaryContains, distanceToEdgeM, placeMeasured, placePosition } from '../../src/lib/field/geometry';
import type { LonLat, MultiPolygon } from '../../src/lib/field/types';

/*
 * The server's check-in reads containment and distance to the edge from PostGIS (the facts its
 * candidate statement measures, loadMeasuredParcelsNear); the phone's offline verdict computes them
 * from the boundary (src/lib/field/geometry.ts). These must agree, or the two would answer a
 * forager differently. The positions are made by PostGIS from the demo parcels (read-only), and the
 * outside reference is PostGIS itself, asked directly: ST_PointOnSurface for a point inside a
 * polygon (PostGIS manual), ST_Covers, and ST_Distance on geography (WGS 84 spheroid, Karney's
 * GeographicLib algorithms since PostGIS 2.2). Boundaries that cross the antimeridian are refused
 * when saved (RFC 7946 §3.1.9; src/lib/field/geometry.ts), so no such position is asked.
 */
let db: Db;
type Case = { label: string; parcelId: string; ownerId: string; boundary: MultiPolygon; position: LonLat; accuracyM: number };
const cases: Case[] = [];

/** The positions, each against its parcel: deep inside, in a hole, on an edge, a few metres either side of it, and outside. */
async function makeCases() {
  const rows = (await db.execute(sql`
    with p as (select id::text as id, owner_id, boundary, ST_AsGeoJSON(boundary, 15) as geojson from parcels where status = 'listed'),
    hole as (select p.id, ST_MakePolygon(ST_InteriorRingN((ST_Dump(p.boundary)).geom, 1)) as g from p where ST_NRings(p.boundary) > ST_NumGeometries(p.boundary)),
    ring as (select p.id, ST_ExteriorRing(ST_GeometryN(p.boundary, 1)) as r, ST_Centroid(p.boundary) as c from p)
    select p.id, p.owner_id, p.geojson, l.label, ST_X(l.pt) as lon, ST_Y(l.pt) as lat, l.accuracy
    from p
    join ring on ring.id = p.id
    cross join lateral (values
      ('inside', ST_PointOnSurface(p.boundary), 5.0),
      ('on the edge', ST_LineInterpolatePoint(ring.r, 0.37), 5.0),
      ('on the edge, good to 10 m', ST_LineInterpolatePoint(ring.r, 0.61), 10.0),
      ('near the edge, good to 1 m', ST_LineInterpolatePoint(ST_MakeLine(ST_LineInterpolatePoint(ring.r, 0.2), ring.c), 0.002), 1.0),
      ('3 m out from the edge, good to 40 m', ST_Project(ST_LineInterpolatePoint(ring.r, 0.8)::geography, 3, ST_Azimuth(ring.c, ST_LineInterpolatePoint(ring.r, 0.8)))::geometry, 40.0),
      ('3 m out from the edge, good to 1 m', ST_Project(ST_LineInterpolatePoint(ring.r, 0.8)::geography, 3, ST_Azimuth(ring.c, ST_LineInterpolatePoint(ring.r, 0.8)))::geometry, 1.0),
      ('in a hole', (select ST_PointOnSurface(h.g) from hole h where h.id = p.id limit 1), 3.0)
    ) as l(label, pt, accuracy)
    where l.pt is not null
    order by p.id, l.label`)) as unknown as { id: string; owner_id: string; geojson: string; label: string; lon: number; lat: number; accuracy: number }[];
  for (const r of rows) {
    cases.push({ label: r.label, parcelId: r.id, ownerId: r.owner_id, boundary: JSON.parse(r.geojson) as MultiPolygon, position: [r.lon, r.lat], accuracyM: Number(r.accuracy) });
  }
}

beforeAll(async () => {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error('DATABASE_URL is not set');
  db = createDb(url, { max: 2 });
  await makeCases();
});

afterAll(async () => {
  if (db) await closeDb(db);
});

describe('the check-in statement measures positions as the engine does', () => {
  it('given the demo parcels, the positions include a hole of a parcel and points within a metre of an edge', () => {
    expect(cases.some((c) => c.label === 'in a hole')).toBe(true);
    expect(cases.filter((c) => c.label === 'on the edge').length).toBeGreaterThanOrEqual(3);
  });

  it('given each position, its parcel is among the candidates (as its owner) with the placement, containment and distance the engine computes from the boundary', async () => {
    const problems: string[] = [];
    for (const c of cases) {
      // A radius past the hole's edge, so the parcel is a candidate wherever the position is.
      const measured = await loadMeasuredParcelsNear(db, { longitude: c.position[0], latitude: c.position[1], radiusM: 5_000, forager: { id: c.ownerId, clubIds: [] } });
      const parcel = measured.find((p) => p.id === c.parcelId);
      if (!parcel) {
        problems.push(`${c.label} ${c.parcelId}: not a candidate`);
        continue;
      }
      const ours = placePosition(c.position, c.accuracyM, c.boundary);
      const theirs = placeMeasured(parcel.at, c.accuracyM);
      if (ours.placement !== theirs.placement) problems.push(`${c.label} ${c.position.join(',')}: engine ${ours.placement}, PostGIS ${theirs.placement}`);
      if (Math.abs(distanceToEdgeM(c.boundary, c.position) - parcel.at.distanceToEdgeM) > 0.01) {
        problems.push(`${c.label} ${c.position.join(',')}: engine ${distanceToEdgeM(c.boundary, c.position)} m, PostGIS ${parcel.at.distanceToEdgeM} m`);
      }
      // On a straight edge in the plane (ST_Covers counts it covered, a crossing count either way) only the placement counts, which is 'edge' there.
      if (parcel.at.distanceToEdgeM > 0.05 && boundaryContains(c.boundary, c.position) !== parcel.at.covered) problems.push(`${c.label} ${c.position.join(',')}: covered differs`);
    }
    expect(problems).toEqual([]);
  });

  it('given the outside references, each kind of position reads as PostGIS says: inside covered and off the edge, on the edge at 0 m, in a hole not covered', async () => {
    const reference = async (c: Case) => {
      const [row] = (await db.execute(sql`
        select ST_Covers(boundary, pt) as covered, ST_Distance(ST_Boundary(boundary)::geography, pt::geography) as metres
        from parcels, (select ST_SetSRID(ST_MakePoint(${c.position[0]}::float8, ${c.position[1]}::float8), 4326) as pt) here where id = ${c.parcelId}::uuid`)) as unknown as { covered: boolean; metres: number }[];
      const [parcel] = (await loadMeasuredParcelsNear(db, { longitude: c.position[0], latitude: c.position[1], radiusM: 5_000, forager: { id: c.ownerId, clubIds: [] } })).filter((p) => p.id === c.parcelId);
      return { reference: row, measured: parcel?.at };
    };
    for (const c of cases) {
      const { reference: ref, measured } = await reference(c);
      expect(measured).toEqual({ covered: ref?.covered, distanceToEdgeM: ref?.metres });
      if (c.label === 'inside') expect(ref?.covered).toBe(true);
      if (c.label === 'in a hole') expect(ref?.covered).toBe(false);
      // A point on the straight (planar) edge is millimetres off the geodesic one PostGIS geography measures to (REFERENCES §2).
      if (c.label === 'on the edge') expect(ref?.metres).toBeLessThan(0.05);
      if (c.label === '3 m out from the edge, good to 1 m') expect(placeMeasured({ covered: ref?.covered ?? true, distanceToEdgeM: ref?.metres ?? 0 }, 1).placement).not.toBe('edge');
    }
  });
});
