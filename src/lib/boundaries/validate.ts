import { capitalize, describeRing, readBoundaryGeometry, type Parts } from './coordinates';
import { formatHectares, formatPosition, geodesicAreaM2 } from './geodesy';
import { topologyProblems } from './topology';
import type { BoundaryLimits, BoundaryProblem, Position } from './types';

export { mergeFeatures, normalizeWinding, toMultiPolygon, zoneInsideParcel } from './shape';

/**
 * Sanity caps for a boundary on the way in.
 * - 10 000 vertices: a surveyed parcel has tens of corners and a walked GPS track a few thousand
 *   points; ten thousand is far beyond either and keeps the pure checks and the map quick.
 * - 10 000 ha (100 km²): larger than almost any private holding; a bigger area is nearly always a
 *   mistake (swapped or projected coordinates, a ring closed the wrong way round the globe).
 */
export const defaultBoundaryLimits: BoundaryLimits = { maxVertices: 10_000, maxAreaHectares: 10_000 };

/**
 * Everything wrong with a proposed boundary, cheapest checks first, each with where and what to do.
 * Pure: the same verdict in the browser as on the server, where PostGIS then has the last word
 * (src/db/boundaries.queries.ts). `vertexCount` counts every position, closing ones too, as ST_NPoints does.
 * Wrong winding is not a problem: RFC 7946 §3.1.6 says parsers SHOULD NOT reject it (see normalizeWinding).
 */
export function checkBoundary(geometry: unknown, limits: BoundaryLimits = defaultBoundaryLimits): { problems: BoundaryProblem[]; vertexCount: number } {
  const read = readBoundaryGeometry(geometry);
  if (!read.ok) return { problems: read.problems, vertexCount: 0 };
  const { parts, vertexCount } = read;
  if (vertexCount > limits.maxVertices) {
    // Before anything costly: the crossing test on 100 000 points is what the cap protects.
    return {
      vertexCount,
      problems: [{
        code: 'too-many-vertices',
        message: `This boundary has ${vertexCount.toLocaleString('en-US')} points; the most we accept is ${limits.maxVertices.toLocaleString('en-US')}. Simplify it in your mapping program (a tolerance of a metre or two keeps the shape) and upload it again.`,
      }],
    };
  }
  const problems = [...ringProblems(parts), ...rangeProblems(parts)];
  if (problems.length > 0) return { problems, vertexCount };
  const areaM2 = geodesicAreaM2(parts);
  if (areaM2 > limits.maxAreaHectares * 10_000) {
    problems.push({
      code: 'too-large',
      message: `This boundary encloses about ${formatHectares(areaM2)}; the most we accept for one parcel is ${formatHectares(limits.maxAreaHectares * 10_000)}. Check that the file is the parcel you meant, or split the land into several parcels.`,
    });
  }
  return { problems: [...problems, ...topologyProblems(parts)], vertexCount };
}

/** RFC 7946 §3.1.6: a linear ring is closed (first = last) and has at least four positions. */
function ringProblems(parts: Parts): BoundaryProblem[] {
  const multipart = parts.length > 1;
  const problems: BoundaryProblem[] = [];
  for (const [p, rings] of parts.entries()) {
    for (const [r, ring] of rings.entries()) {
      const where = { part: p + 1, ring: r + 1 };
      const label = capitalize(describeRing(p + 1, r + 1, multipart));
      const first = ring[0];
      const last = ring[ring.length - 1];
      // PostGIS (GEOS) counts corners without consecutive repeats, so [a, b, a, a] is still too few.
      const distinct = ring.filter((q, i) => i === 0 || q[0] !== ring[i - 1]?.[0] || q[1] !== ring[i - 1]?.[1]).length;
      if (ring.length < 4 || distinct < 4) {
        problems.push({
          code: 'too-few-positions', ...where, ...(first ? { at: first } : {}),
          message: `${label} has ${ring.length} positions and ${new Set(ring.map((q) => `${q[0]} ${q[1]}`)).size} distinct corners; an area needs at least three corners with the first repeated at the end, four positions in all (RFC 7946 §3.1.6). Add the missing corners or delete the ring.`,
        });
      }
      if (first && last && (first[0] !== last[0] || first[1] !== last[1])) {
        problems.push({
          code: 'unclosed-ring', ...where, at: last,
          message: `${label} is not closed: it starts at ${formatPosition(first)} but ends at ${formatPosition(last)}. Repeat the first position at the end (RFC 7946 §3.1.6), or finish the drawing on the starting point.`,
        });
      }
    }
  }
  return problems;
}

const lonInRange = (lon: number) => lon >= -180 && lon <= 180;
const latInRange = (lat: number) => lat >= -90 && lat <= 90;

/**
 * RFC 7946 §3.1.1 and §4: positions are [longitude, latitude] in WGS 84 degrees. When every pair read
 * the other way round is in range and it is not as written, the file is [lat, lon]; so is one that
 * would put the land south of 60°S, where no land is privately held (Antarctic Treaty, 1959, from memory).
 */
function rangeProblems(parts: Parts): BoundaryProblem[] {
  const positions = parts.flat(2);
  const first: Position = positions[0] ?? [0, 0];
  const swapped: BoundaryProblem = {
    code: 'swapped-coordinates',
    at: [first[1], first[0]], // where the first corner is if the pair is read the other way round
    message: 'This file looks like [latitude, longitude]; GeoJSON is [longitude, latitude] (RFC 7946 §3.1.1). Export it again as GeoJSON, or swap the two numbers in every position.',
  };
  const outOfRange = positions.filter(([lon, lat]) => !lonInRange(lon) || !latInRange(lat));
  if (outOfRange.length > 0) {
    if (positions.every(([lon, lat]) => lonInRange(lat) && latInRange(lon))) return [swapped];
    return outOfRangeProblems(parts, outOfRange.length);
  }
  if (positions.every(([lon, lat]) => lat < -60 && latInRange(lon))) {
    return [{ ...swapped, message: `${swapped.message} As written it lies in Antarctica, near ${formatPosition(first)}.` }];
  }
  return antimeridianProblems(parts);
}

function outOfRangeProblems(parts: Parts, count: number): BoundaryProblem[] {
  const multipart = parts.length > 1;
  for (const [p, rings] of parts.entries()) {
    for (const [r, ring] of rings.entries()) {
      const i = ring.findIndex(([lon, lat]) => !lonInRange(lon) || !latInRange(lat));
      const position = ring[i];
      if (!position) continue;
      const [lon, lat] = position;
      const what = lonInRange(lon) ? `latitude ${lat} is outside −90…90` : `longitude ${lon} is outside −180…180`;
      return [{
        code: 'out-of-range', part: p + 1, ring: r + 1,
        message: `Position ${i + 1} of ${describeRing(p + 1, r + 1, multipart)} is [${lon}, ${lat}]: its ${what}${count > 1 ? ` (${count} positions are out of range)` : ''}. Coordinates must be WGS 84 degrees (RFC 7946 §4); a file in metres or feet (a projected or state-plane system) must be exported again in WGS 84.`,
      }];
    }
  }
  return [];
}

/** RFC 7946 §3.1.9: a geometry crossing the antimeridian SHOULD be cut in two; an edge of more than 180° of longitude is one that wasn't. */
function antimeridianProblems(parts: Parts): BoundaryProblem[] {
  const multipart = parts.length > 1;
  for (const [p, rings] of parts.entries()) {
    for (const [r, ring] of rings.entries()) {
      const i = ring.findIndex((q, k) => k > 0 && Math.abs(q[0] - (ring[k - 1] as Position)[0]) > 180);
      if (i < 0) continue;
      return [{
        code: 'crosses-antimeridian', part: p + 1, ring: r + 1, at: ring[i] as Position,
        message: `${capitalize(describeRing(p + 1, r + 1, multipart))} jumps across the 180° meridian near ${formatPosition(ring[i] as Position)}. Cut the boundary into two parts at 180° (RFC 7946 §3.1.9) and upload it again.`,
      }];
    }
  }
  return [];
}
