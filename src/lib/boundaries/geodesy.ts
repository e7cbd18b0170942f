import geodesic from 'geographiclib-geodesic';
import type { Position } from './types';

/**
 * Distances and areas on the WGS 84 ellipsoid through GeographicLib (geographiclib-geodesic), which
 * takes (lat, lon), the reverse of GeoJSON's [lon, lat]. Its edges are geodesics where GeoJSON's are
 * straight in lon/lat; over a parcel the two differ by centimetres, far inside the size cap and the
 * 25 m closing tolerance these serve. The authoritative area of a saved boundary is PostGIS's ST_Area
 * on geography.
 */
const wgs84 = geodesic.Geodesic.WGS84;

/** Geodesic distance in metres between two [lon, lat] positions. */
export function geodesicDistanceM([lon1, lat1]: Position, [lon2, lat2]: Position): number {
  return wgs84.Inverse(lat1, lon1, lat2, lon2, geodesic.Geodesic.DISTANCE).s12 ?? Number.NaN;
}

/** Unsigned area in m² of one closed ring, whichever way it winds. */
function ringAreaM2(ring: readonly Position[]): number {
  const polygon = wgs84.Polygon(false);
  for (const [lon, lat] of ring.slice(0, -1)) polygon.AddPoint(lat, lon);
  // Signed, so a clockwise ring gives minus its own area rather than the rest of the Earth.
  return Math.abs(polygon.Compute(false, true).area ?? Number.NaN);
}

/** Exterior minus holes, summed over the parts (RFC 7946 §3.1.6–§3.1.7). A ring round a pole is out of scope (no parcel is). */
export function geodesicAreaM2(polygons: readonly (readonly Position[][])[]): number {
  let total = 0;
  for (const [exterior, ...holes] of polygons) {
    if (!exterior) continue;
    total += ringAreaM2(exterior);
    for (const hole of holes) total -= ringAreaM2(hole);
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
