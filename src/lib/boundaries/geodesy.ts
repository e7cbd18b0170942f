import type { Position } from './types';

/**
 * Mean Earth radius (2a + b) / 3 on WGS 84 = 6 371 008.8 m (REFERENCES §2). A sphere is good enough for
 * a size cap and a 25 m closing tolerance (±0.5 % against the spheroid); the authoritative area of a
 * saved boundary is PostGIS's ST_Area on geography, computed on the WGS 84 spheroid.
 */
export const meanEarthRadiusM = 6_371_008.8;

const toRadians = Math.PI / 180;

/** Great-circle distance in metres between two [lon, lat] positions (haversine on the mean radius). */
export function haversineDistanceM([lon1, lat1]: Position, [lon2, lat2]: Position): number {
  const dLat = (lat2 - lat1) * toRadians;
  const dLon = (lon2 - lon1) * toRadians;
  const h = Math.sin(dLat / 2) ** 2 + Math.cos(lat1 * toRadians) * Math.cos(lat2 * toRadians) * Math.sin(dLon / 2) ** 2;
  return 2 * meanEarthRadiusM * Math.asin(Math.min(1, Math.sqrt(h)));
}

/**
 * Unsigned area in m² of one ring on the sphere, edges taken as great-circle arcs.
 *
 * Spherical excess summed edge by edge over the triangles (north pole, P1, P2). A spherical triangle
 * with sides a, b and included angle C has tan(E/2) = tan(a/2)·tan(b/2)·sin C / (1 + tan(a/2)·tan(b/2)·cos C);
 * here a and b are the colatitudes 90° − φ and C is the edge's longitude step Δλ. The triangles'
 * signed sum is the ring's area. A ring round a pole is out of scope (no parcel is).
 */
export function sphericalRingAreaM2(ring: readonly Position[]): number {
  let excess = 0;
  for (let i = 0; i + 1 < ring.length; i += 1) {
    const [lon1, lat1] = ring[i] as Position;
    const [lon2, lat2] = ring[i + 1] as Position;
    let dLon = (lon2 - lon1) * toRadians;
    if (dLon > Math.PI) dLon -= 2 * Math.PI;
    if (dLon < -Math.PI) dLon += 2 * Math.PI;
    const t1 = Math.tan((Math.PI / 2 - lat1 * toRadians) / 2);
    const t2 = Math.tan((Math.PI / 2 - lat2 * toRadians) / 2);
    excess += 2 * Math.atan2(t1 * t2 * Math.sin(dLon), 1 + t1 * t2 * Math.cos(dLon));
  }
  return Math.abs(excess) * meanEarthRadiusM ** 2;
}

/** Exterior minus holes, summed over the parts (RFC 7946 §3.1.6–§3.1.7). */
export function sphericalAreaM2(polygons: readonly (readonly Position[][])[]): number {
  let total = 0;
  for (const [exterior, ...holes] of polygons) {
    if (!exterior) continue;
    total += sphericalRingAreaM2(exterior);
    for (const hole of holes) total -= sphericalRingAreaM2(hole);
  }
  return total;
}

/** "43.94500°N, 72.85500°W" from [lon, lat]: five decimals are about a metre on the ground. */
export function formatPosition([lon, lat]: readonly number[] | [number, number]): string {
  const fmt = (value: number | undefined) => Math.abs(value ?? 0).toFixed(5);
  return `${fmt(lat)}°${(lat ?? 0) < 0 ? 'S' : 'N'}, ${fmt(lon)}°${(lon ?? 0) < 0 ? 'W' : 'E'}`;
}

/** "1,234.5 ha" for messages. */
export function formatHectares(squareMetres: number): string {
  return `${(squareMetres / 10_000).toLocaleString('en-US', { maximumFractionDigits: 1 })} ha`;
}
