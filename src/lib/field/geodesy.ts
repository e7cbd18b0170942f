/**
 * Distances on the WGS 84 spheroid for the field engine, matched to PostGIS geography.
 *
 * PostGIS `ST_Distance(geography, geography)` (lwgeodetic.c, `edge_distance_to_point`) finds the
 * nearest point of an edge on the unit sphere, taking the edge as a great-circle arc and the
 * geodetic latitude as a spherical one, and then measures from the position to that point on the
 * spheroid (GeographicLib's inverse since PostGIS 2.2). We do the same, so our distances agree with
 * the database's; the spheroid inverse here is Vincenty's (below), accurate to well under a
 * millimetre on any line a parcel can hold.
 */

/** WGS 84: a = 6 378 137 m, 1/f = 298.257223563 (NGA TR8350.2; built into GeographicLib). */
const a = 6_378_137;
const f = 1 / 298.257223563;
const b = a * (1 - f);
const toRadians = Math.PI / 180;

/** A point on the unit sphere, x towards (0°, 0°), z towards the north pole. */
export type Vec3 = [number, number, number];

/** [lon, lat] in degrees onto the unit sphere, geodetic latitude used as spherical (PostGIS `geog2cart`). */
export function toUnitVector(lon: number, lat: number): Vec3 {
  const [φ, λ] = [lat * toRadians, lon * toRadians];
  return [Math.cos(φ) * Math.cos(λ), Math.cos(φ) * Math.sin(λ), Math.sin(φ)];
}

/** Back to [lon, lat] in degrees (PostGIS `cart2geog`). */
export function fromUnitVector([x, y, z]: Vec3): [number, number] {
  return [Math.atan2(y, x) / toRadians, Math.atan2(z, Math.hypot(x, y)) / toRadians];
}

/**
 * The unit normal of the great circle through two [lon, lat] positions, or null for a zero-length
 * edge. Computed from the angles rather than as a cross product of two nearly equal vectors, which
 * would lose digits on a metre-long edge (PostGIS `robust_cross_product`).
 */
export function edgeNormal([lon1, lat1]: readonly number[], [lon2, lat2]: readonly number[]): Vec3 | null {
  const [p, q] = [(lat1 ?? 0) * toRadians, (lat2 ?? 0) * toRadians];
  const [pl, ql] = [(lon1 ?? 0) * toRadians, (lon2 ?? 0) * toRadians];
  const sum = (ql + pl) / -2;
  const half = (ql - pl) / 2;
  const [sinDiff, sinSum] = [Math.sin(p - q), Math.sin(p + q)];
  const n: Vec3 = [
    sinDiff * Math.sin(sum) * Math.cos(half) - sinSum * Math.cos(sum) * Math.sin(half),
    sinDiff * Math.cos(sum) * Math.cos(half) + sinSum * Math.sin(sum) * Math.sin(half),
    Math.cos(p) * Math.cos(q) * Math.sin(ql - pl),
  ];
  const length = Math.hypot(...n);
  return length === 0 ? null : [n[0] / length, n[1] / length, n[2] / length];
}

const dot = (u: Vec3, v: Vec3) => u[0] * v[0] + u[1] * v[1] + u[2] * v[2];
const cross = (u: Vec3, v: Vec3): Vec3 => [u[1] * v[2] - u[2] * v[1], u[2] * v[0] - u[0] * v[2], u[0] * v[1] - u[1] * v[0]];
/** Squared chord between two unit vectors: monotonic in the angle between them, and cheap. */
export const chord2 = (u: Vec3, v: Vec3) => (u[0] - v[0]) ** 2 + (u[1] - v[1]) ** 2 + (u[2] - v[2]) ** 2;

/**
 * The point of the arc start → end (with its unit normal) nearest to p on the sphere, and its
 * squared chord: the foot of the perpendicular when it falls on the arc, else the nearer end.
 */
export function nearestOnArc(p: Vec3, start: Vec3, end: Vec3, normal: Vec3 | null): { point: Vec3; chord2: number } {
  let best = { point: start, chord2: chord2(p, start) };
  const atEnd = chord2(p, end);
  if (atEnd < best.chord2) best = { point: end, chord2: atEnd };
  if (!normal) return best;
  const h = dot(p, normal);
  const foot: Vec3 = [p[0] - normal[0] * h, p[1] - normal[1] * h, p[2] - normal[2] * h];
  const length = Math.hypot(...foot);
  if (length === 0) return best;
  const k: Vec3 = [foot[0] / length, foot[1] / length, foot[2] / length];
  // On the minor arc when start → k and k → end both turn the same way as the edge (PostGIS `edge_contains_point`).
  if (dot(cross(start, k), normal) >= 0 && dot(cross(k, end), normal) >= 0) {
    const atFoot = chord2(p, k);
    if (atFoot < best.chord2) best = { point: k, chord2: atFoot };
  }
  return best;
}

/** Mean radius (2a + b)/3 for the fallback below (REFERENCES §2). */
const meanRadius = (2 * a + b) / 3;

/**
 * Geodesic distance in metres between two [lon, lat] positions on WGS 84.
 *
 * T. Vincenty, "Direct and inverse solutions of geodesics on the ellipsoid with application of
 * nested equations", Survey Review 23(176):88–93, 1975: the inverse by iteration on the auxiliary
 * sphere. It converges for every pair that is not nearly antipodal; a parcel's edges are never
 * half a world from a forager, but should it fail we fall back to the great circle on the mean
 * radius rather than loop (±0.5 %).
 */
export function geodesicDistanceM([lon1, lat1]: readonly number[], [lon2, lat2]: readonly number[]): number {
  const [φ1, φ2] = [(lat1 ?? 0) * toRadians, (lat2 ?? 0) * toRadians];
  let L = ((lon2 ?? 0) - (lon1 ?? 0)) * toRadians;
  if (L > Math.PI) L -= 2 * Math.PI;
  if (L < -Math.PI) L += 2 * Math.PI;
  const tanU1 = (1 - f) * Math.tan(φ1);
  const tanU2 = (1 - f) * Math.tan(φ2);
  const cosU1 = 1 / Math.sqrt(1 + tanU1 * tanU1);
  const cosU2 = 1 / Math.sqrt(1 + tanU2 * tanU2);
  const sinU1 = tanU1 * cosU1;
  const sinU2 = tanU2 * cosU2;
  let λ = L;
  for (let iteration = 0; iteration < 200; iteration += 1) {
    const [sinλ, cosλ] = [Math.sin(λ), Math.cos(λ)];
    const sinσ = Math.hypot(cosU2 * sinλ, cosU1 * sinU2 - sinU1 * cosU2 * cosλ);
    if (sinσ === 0) return 0;
    const cosσ = sinU1 * sinU2 + cosU1 * cosU2 * cosλ;
    const σ = Math.atan2(sinσ, cosσ);
    const sinα = (cosU1 * cosU2 * sinλ) / sinσ;
    const cos2α = 1 - sinα * sinα;
    const cos2σm = cos2α === 0 ? 0 : cosσ - (2 * sinU1 * sinU2) / cos2α; // 0 on the equator
    const C = (f / 16) * cos2α * (4 + f * (4 - 3 * cos2α));
    const previous = λ;
    λ = L + (1 - C) * f * sinα * (σ + C * sinσ * (cos2σm + C * cosσ * (-1 + 2 * cos2σm * cos2σm)));
    if (Math.abs(λ - previous) < 1e-13) {
      const u2 = (cos2α * (a * a - b * b)) / (b * b);
      const A = 1 + (u2 / 16384) * (4096 + u2 * (-768 + u2 * (320 - 175 * u2)));
      const B = (u2 / 1024) * (256 + u2 * (-128 + u2 * (74 - 47 * u2)));
      const Δσ = B * sinσ * (cos2σm + (B / 4) * (cosσ * (-1 + 2 * cos2σm * cos2σm) - (B / 6) * cos2σm * (-3 + 4 * sinσ * sinσ) * (-3 + 4 * cos2σm * cos2σm)));
      return b * A * (σ - Δσ);
    }
  }
  const p = toUnitVector(lon1 ?? 0, lat1 ?? 0);
  const q = toUnitVector(lon2 ?? 0, lat2 ?? 0);
  return meanRadius * 2 * Math.asin(Math.min(1, Math.sqrt(chord2(p, q)) / 2));
}
