import booleanPointInPolygon from '@turf/boolean-point-in-polygon';
import type { MultiPolygon } from 'geojson';
import type { Sql } from 'postgres';
import type { BenchPosition } from './parcels';

export type NaiveFigures = { loadMs: number; parcels: number; points: number; msPerLookup: number; matchesPostgis: number };

/**
 * What the index saves: every boundary held in memory (loaded once, not timed per lookup) and
 * turf's point-in-polygon (ray casting, holes excluded) run on all of them for each position.
 * Containment only — no accuracy radius, no distance to the edge — so it is a lower bound of a
 * scan's cost. `expected` are PostGIS's ST_Covers counts for the same positions.
 */
export async function measureNaiveScan(sql: Sql, positions: BenchPosition[], expected: number[]): Promise<NaiveFigures> {
  const loadStarted = performance.now();
  const rows = await sql<{ g: string }[]>`select ST_AsGeoJSON(boundary, 7) as g from parcels`;
  const boundaries = rows.map((r) => JSON.parse(r.g) as MultiPolygon);
  const loadMs = performance.now() - loadStarted;

  let agree = 0;
  const started = performance.now();
  positions.forEach(({ longitude, latitude }, i) => {
    const point = [longitude, latitude];
    let inside = 0;
    for (const boundary of boundaries) if (booleanPointInPolygon(point, boundary)) inside += 1;
    if (inside === expected[i]) agree += 1;
  });
  const elapsed = performance.now() - started;
  return { loadMs, parcels: boundaries.length, points: positions.length, msPerLookup: elapsed / Math.max(1, positions.length), matchesPostgis: agree };
}
