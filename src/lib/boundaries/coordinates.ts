import type { BoundaryProblem, Position } from './types';

/** A boundary's parts → rings → positions, altitude dropped. */
export type Parts = Position[][][];

export type ReadGeometry =
  | { ok: true; type: 'Polygon' | 'MultiPolygon'; parts: Parts; vertexCount: number }
  | { ok: false; problems: BoundaryProblem[] };

/** "ring 2 of part 3 (a hole)", or "ring 2 (a hole)" when there is only one part. Counted from 1. */
export function describeRing(part: number, ring: number, multipart: boolean): string {
  return `ring ${ring}${multipart ? ` of part ${part}` : ''} (${ring === 1 ? 'the outer edge' : 'a hole'})`;
}

const typeName = (value: unknown) =>
  value !== null && typeof value === 'object' && typeof (value as { type?: unknown }).type === 'string'
    ? `a ${(value as { type: string }).type}`
    : Array.isArray(value) ? 'a list' : value === null ? 'nothing' : `a ${typeof value}`;

/**
 * Reads a GeoJSON Polygon or MultiPolygon from untrusted input: a position starts with two finite
 * numbers, [longitude, latitude(, altitude)] (RFC 7946 §3.1.1). The altitude (and anything after it)
 * is dropped silently, since a parcel is an area on the ground. No closing or reordering happens here.
 */
export function readBoundaryGeometry(geometry: unknown): ReadGeometry {
  const type = (geometry as { type?: unknown } | null)?.type;
  if (type !== 'Polygon' && type !== 'MultiPolygon') {
    return fail('not-a-polygon', `A boundary must be a Polygon or MultiPolygon (RFC 7946 §3.1.6–3.1.7), but this is ${typeName(geometry)}. Draw the boundary as an area, not as points or a line.`);
  }
  const coordinates = (geometry as { coordinates?: unknown }).coordinates;
  const polygons = type === 'Polygon' ? [coordinates] : coordinates;
  if (!Array.isArray(polygons)) return fail('bad-coordinates', `The ${type}'s coordinates are not a list; export the file again from your mapping program.`);
  if (polygons.length === 0) return fail('empty', `The ${type} has no coordinates at all; draw or upload the boundary again.`);
  const multipart = type === 'MultiPolygon';
  const parts: Parts = [];
  let vertexCount = 0;
  for (const [p, polygon] of polygons.entries()) {
    const partLabel = multipart ? `part ${p + 1}` : 'the polygon';
    if (!Array.isArray(polygon)) return fail('bad-coordinates', `The coordinates of ${partLabel} are not a list of rings.`, { part: p + 1 });
    if (polygon.length === 0) return fail('empty', `${capitalize(partLabel)} has no rings; remove it or draw it again.`, { part: p + 1 });
    const rings: Position[][] = [];
    for (const [r, ring] of polygon.entries()) {
      const where = { part: p + 1, ring: r + 1 };
      if (!Array.isArray(ring)) return fail('bad-coordinates', `${capitalize(describeRing(p + 1, r + 1, multipart))} is not a list of positions.`, where);
      const positions: Position[] = [];
      for (const [i, position] of ring.entries()) {
        const [lon, lat] = Array.isArray(position) ? position : [];
        const finite = typeof lon === 'number' && typeof lat === 'number' && Number.isFinite(lon) && Number.isFinite(lat);
        if (!finite) {
          return fail(
            'bad-coordinates',
            `Position ${i + 1} of ${describeRing(p + 1, r + 1, multipart)} is ${JSON.stringify(position) ?? 'missing'}, not [longitude, latitude] numbers (RFC 7946 §3.1.1). Fix or remove that point.`,
            where,
          );
        }
        positions.push([lon, lat]);
      }
      vertexCount += positions.length;
      rings.push(positions);
    }
    parts.push(rings);
  }
  return { ok: true, type, parts, vertexCount };
}

function capitalize(text: string) {
  return text.charAt(0).toUpperCase() + text.slice(1);
}

function fail(code: string, message: string, where: { part?: number; ring?: number } = {}): ReadGeometry {
  return { ok: false, problems: [{ code, message: capitalize(message), ...where }] };
}

export { capitalize };
