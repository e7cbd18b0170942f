import { chord2, edgeNormal, fromUnitVector, geodesicDistanceM, nearestOnArc, toUnitVector, type Vec3 } from './geodesy';
import type { LonLat, MeasuredPosition, MultiPolygon, Placement } from './types';

/**
 * Where a forager stands against a parcel or zone boundary.
 *
 * Containment is decided in the plane of longitude and latitude, as RFC 7946 §3.1.1 draws edges
 * (straight between positions) and as PostGIS `ST_Covers(geometry, geometry)` decides it. Distance
 * to the boundary is geodesic, as PostGIS geography measures it (see geodesy.ts). Over a parcel's
 * edges the two readings of an edge differ by centimetres (0.02 m at mid-edge over 1 km east–west
 * at 45°N, REFERENCES §2), far inside any accuracy radius. Antimeridian-crossing boundaries are
 * refused when saved (RFC 7946 §3.1.9), so longitudes are not wrapped here.
 */

type Ring = {
  /** [minLon, minLat, maxLon, maxLat] for the cheap rejection before the crossing count. */
  bbox: [number, number, number, number];
  lon: Float64Array;
  lat: Float64Array;
  /** Unit vectors of the positions and unit normals of the edges (null for a repeated position). */
  vectors: Vec3[];
  normals: (Vec3 | null)[];
};
type Part = { exterior: Ring; holes: Ring[] };

/**
 * Prepared boundaries, keyed by the boundary object itself: a field pack checks the same parcels
 * again and again, and a boundary is plain data that nobody mutates once read.
 */
const prepared = new WeakMap<MultiPolygon, Part[]>();

function prepareRing(positions: number[][]): Ring {
  const n = positions.length;
  const lon = new Float64Array(n);
  const lat = new Float64Array(n);
  const bbox: Ring['bbox'] = [Infinity, Infinity, -Infinity, -Infinity];
  const vectors: Vec3[] = [];
  const normals: (Vec3 | null)[] = [];
  positions.forEach((position, i) => {
    const [x = Number.NaN, y = Number.NaN] = position;
    lon[i] = x;
    lat[i] = y;
    bbox[0] = Math.min(bbox[0], x);
    bbox[1] = Math.min(bbox[1], y);
    bbox[2] = Math.max(bbox[2], x);
    bbox[3] = Math.max(bbox[3], y);
    vectors.push(toUnitVector(x, y));
    if (i > 0) normals.push(edgeNormal(positions[i - 1] as number[], position));
  });
  // RFC 7946 §3.1.6 closes every ring (first = last); an unclosed one is closed here rather than refused.
  const [first, last] = [positions[0], positions[n - 1]];
  if (first && last && (first[0] !== last[0] || first[1] !== last[1])) {
    return prepareRing([...positions, first]);
  }
  return { bbox, lon, lat, vectors, normals };
}

function prepare(boundary: MultiPolygon): Part[] {
  let parts = prepared.get(boundary);
  if (!parts) {
    parts = boundary.coordinates
      .filter((polygon) => (polygon[0]?.length ?? 0) > 0)
      .map(([exterior = [], ...holes]) => ({ exterior: prepareRing(exterior), holes: holes.filter((h) => h.length > 0).map(prepareRing) }));
    prepared.set(boundary, parts);
  }
  return parts;
}

const inBox = ([x, y]: LonLat, [minX, minY, maxX, maxY]: Ring['bbox']) => x >= minX && x <= maxX && y >= minY && y <= maxY;

/**
 * Even–odd crossing test (the ray-casting rule of M. Shimrat, "Algorithm 112: Position of point
 * relative to polygon", CACM 5(8):434, 1962, in W. R. Franklin's PNPOLY form): a ray from the
 * point crosses the ring an odd number of times exactly when the point is inside. Winding order
 * does not matter (RFC 7946 §3.1.6: parsers SHOULD NOT reject a ring for its winding).
 */
function ringContains(ring: Ring, [x, y]: LonLat): boolean {
  if (!inBox([x, y], ring.bbox)) return false;
  const { lon, lat } = ring;
  let inside = false;
  for (let i = 1; i < lon.length; i += 1) {
    const [xi, yi, xj, yj] = [lon[i] as number, lat[i] as number, lon[i - 1] as number, lat[i - 1] as number];
    if (yi > y !== yj > y && x < ((xj - xi) * (y - yi)) / (yj - yi) + xi) inside = !inside;
  }
  return inside;
}

/** Whether a position lies in the parcel: inside some part's exterior and in none of its holes (RFC 7946 §3.1.6: a hole is not the parcel). */
export function boundaryContains(boundary: MultiPolygon, position: LonLat): boolean {
  return prepare(boundary).some((part) => ringContains(part.exterior, position) && !part.holes.some((hole) => ringContains(hole, position)));
}

/** Whether a position lies inside some part's exterior ring, holes or not: on the parcel, or in one of its cut-outs. */
export function exteriorContains(boundary: MultiPolygon, position: LonLat): boolean {
  return prepare(boundary).some((part) => ringContains(part.exterior, position));
}

/** Whether a position lies in the boundary's bounding box: west, south, east and north of all its parts, as PostGIS's `&&` tests. */
export function boundingBoxContains(boundary: MultiPolygon, [lon, lat]: LonLat): boolean {
  const corners = boundary.coordinates.flatMap((polygon) => polygon[0] ?? []);
  const lons = corners.map((c) => c[0] as number);
  const lats = corners.map((c) => c[1] as number);
  return lon >= Math.min(...lons) && lon <= Math.max(...lons) && lat >= Math.min(...lats) && lat <= Math.max(...lats);
}

/**
 * Geodesic metres from a position to the nearest edge of any ring (exterior or hole) of any part.
 * As PostGIS geography does, the nearest point is found on the sphere and the distance to it is
 * measured on the WGS 84 spheroid, so this agrees with `ST_Distance(ST_Boundary(b)::geography, p::geography)`.
 */
export function distanceToEdgeM(boundary: MultiPolygon, position: LonLat): number {
  const p = toUnitVector(position[0], position[1]);
  let best: { point: Vec3; chord2: number } | null = null;
  for (const part of prepare(boundary)) {
    for (const ring of [part.exterior, ...part.holes]) {
      for (let i = 1; i < ring.vectors.length; i += 1) {
        const candidate = nearestOnArc(p, ring.vectors[i - 1] as Vec3, ring.vectors[i] as Vec3, ring.normals[i - 1] ?? null);
        if (!best || candidate.chord2 < best.chord2) best = candidate;
      }
      if (ring.vectors.length === 1 && ring.vectors[0]) {
        const only = ring.vectors[0];
        if (!best || chord2(p, only) < best.chord2) best = { point: only, chord2: chord2(p, only) };
      }
    }
  }
  if (!best) return Infinity;
  const metres = geodesicDistanceM(position, fromUnitVector(best.point));
  // The trip through unit vectors leaves nanometres on a position that is on the boundary; call that 0.
  return metres < 1e-6 ? 0 : metres;
}

/**
 * Where a position stands against a boundary, given a 95 % accuracy radius in metres (W3C
 * Geolocation API `coords.accuracy`). Inside by more than the radius: inside. Outside every part
 * by more than the radius: outside. Otherwise: edge — too close to call.
 */
export function placePosition(position: LonLat, accuracyM: number, boundary: MultiPolygon): Placement {
  if (!(accuracyM >= 0)) throw new RangeError(`accuracy must be a number of metres, 0 or more (got ${accuracyM})`);
  const [lon, lat] = position;
  if (!(Math.abs(lon) <= 180 && Math.abs(lat) <= 90)) throw new RangeError(`not a [longitude, latitude] position: ${JSON.stringify(position)}`);
  const distance = distanceToEdgeM(boundary, position);
  if (distance > accuracyM) return { placement: boundaryContains(boundary, position) ? 'inside' : 'outside', distanceToEdgeM: distance };
  return { placement: 'edge', distanceToEdgeM: distance };
}

/** placePosition's answer from what the database measured at the position instead of from the boundary's vertices. */
export function placeMeasured(at: MeasuredPosition, accuracyM: number): Placement {
  if (!(accuracyM >= 0)) throw new RangeError(`accuracy must be a number of metres, 0 or more (got ${accuracyM})`);
  const distance = at.distanceToEdgeM;
  if (distance > accuracyM) return { placement: at.covered ? 'inside' : 'outside', distanceToEdgeM: distance };
  return { placement: 'edge', distanceToEdgeM: distance };
}
