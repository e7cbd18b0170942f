import { readBoundaryGeometry } from './coordinates';
import type { BoundaryFeature, BoundaryProblem } from './types';

export type Collected = { features: BoundaryFeature[]; notes: string[]; problems: BoundaryProblem[] };

const geometryTypes = new Set(['Point', 'MultiPoint', 'LineString', 'MultiLineString', 'Polygon', 'MultiPolygon', 'GeometryCollection']);

/** The names RFC 7946 App. B.1 and older GeoJSON (2008) used for plain WGS 84 lon/lat. */
const wgs84Names = /^(urn:ogc:def:crs:OGC:(1\.3:)?CRS84|urn:ogc:def:crs:EPSG:[\d.]*:4326|EPSG:4326|OGC:CRS84|CRS84|WGS ?84)$/i;

/**
 * The legacy `crs` member is no longer part of GeoJSON (RFC 7946 App. B.1) and is ignored, unless it
 * names another system: then the numbers are not WGS 84 degrees (RFC 7946 §4) and reading them as such
 * would put the parcel somewhere else entirely.
 */
function crsProblem(value: unknown): BoundaryProblem | null {
  const crs = (value as { crs?: unknown } | null)?.crs;
  if (crs === undefined || crs === null) return null;
  const name = (crs as { properties?: { name?: unknown } }).properties?.name;
  if (typeof name === 'string' && wgs84Names.test(name.trim())) return null;
  const named = typeof name === 'string' ? `“${name}”` : 'a linked or unnamed system';
  return {
    code: 'unsupported-crs',
    message: `This file says its coordinates are in ${named} (its "crs" member). Tallywood reads only WGS 84 longitude and latitude (RFC 7946 §4). Export the file again as GeoJSON in WGS 84 (EPSG:4326).`,
  };
}

const featureName = (properties: unknown): string | null => {
  const props = (properties ?? {}) as { name?: unknown; title?: unknown };
  for (const value of [props.name, props.title]) if (typeof value === 'string' && value.trim() !== '') return value.trim();
  return null;
};

const plural = (count: number, word: string) => `${count} ${word}${count === 1 ? '' : 's'}`;

/**
 * The Polygon and MultiPolygon areas of a GeoJSON object (RFC 7946 §3): a FeatureCollection, a Feature
 * or a bare geometry. GeometryCollection members are flattened (§3.1.8); points and lines are skipped
 * with a note, since only an area can be a parcel. `noun` names the file's items in messages.
 */
export function collectGeoJson(root: unknown, noun = 'feature'): Collected {
  const out: Collected = { features: [], notes: [], problems: [] };
  const type = (root as { type?: unknown } | null)?.type;
  if (type !== 'FeatureCollection' && type !== 'Feature' && !geometryTypes.has(type as string)) {
    out.problems.push({
      code: 'unsupported-format',
      message: 'This is JSON but not GeoJSON: it has no "type" of FeatureCollection, Feature, Polygon or MultiPolygon (RFC 7946 §3). Upload a boundary as GeoJSON (.geojson), KML (.kml) or GPX (.gpx).',
    });
    return out;
  }
  const skipped = new Map<string, number>();
  let empty = 0;
  const items: unknown[] = type === 'FeatureCollection' ? toArray((root as { features?: unknown }).features) : [root];
  for (const problem of [root, ...items].map(crsProblem)) if (problem) return { ...out, problems: [problem] };

  const addGeometry = (geometry: unknown, name: string | null, label: string) => {
    const kind = (geometry as { type?: unknown } | null)?.type;
    if (geometry === null || geometry === undefined) {
      empty += 1;
    } else if (kind === 'GeometryCollection') {
      for (const member of toArray((geometry as { geometries?: unknown }).geometries)) addGeometry(member, name, label);
    } else if (kind === 'Polygon' || kind === 'MultiPolygon') {
      const read = readBoundaryGeometry(geometry);
      if (!read.ok) {
        out.problems.push(...read.problems.map((problem) => ({ ...problem, message: `In ${label}: ${problem.message}` })));
      } else {
        out.features.push({
          name,
          geometry: read.type === 'Polygon' ? { type: 'Polygon', coordinates: read.parts[0] ?? [] } : { type: 'MultiPolygon', coordinates: read.parts },
        });
      }
    } else {
      const key = typeof kind === 'string' ? kind : 'unknown';
      skipped.set(key, (skipped.get(key) ?? 0) + 1);
    }
  };

  for (const [i, item] of items.entries()) {
    const isFeature = (item as { type?: unknown } | null)?.type === 'Feature';
    const name = isFeature ? featureName((item as { properties?: unknown }).properties) : null;
    const label = `${noun} ${i + 1}${name ? ` (“${name}”)` : ''}`;
    addGeometry(isFeature ? (item as { geometry?: unknown }).geometry : item, name, label);
  }

  const skippedCount = [...skipped.values()].reduce((sum, n) => sum + n, 0);
  const kinds = [...skipped.entries()].map(([kind, n]) => `${n} ${kind}`);
  if (skippedCount > 0) {
    out.notes.push(`Skipped ${plural(skippedCount, noun)} that ${skippedCount === 1 ? 'is not an area' : 'are not areas'} (${kinds.join(', ')}): only a Polygon or MultiPolygon can be a boundary.`);
  }
  if (empty > 0) out.notes.push(`Skipped ${plural(empty, noun)} with no geometry.`);
  if (out.features.length === 0 && out.problems.length === 0) {
    const found = [...kinds, ...(empty > 0 ? [`${plural(empty, noun)} with no geometry`] : [])];
    out.problems.push({
      code: 'no-polygon',
      message: `This file has no area in it${found.length > 0 ? `, only ${found.join(', ')}` : ''}. A boundary must be a Polygon or MultiPolygon: draw the parcel as an area in your mapping program and export it again.`,
    });
  }
  return out;
}

function toArray(value: unknown): unknown[] {
  return Array.isArray(value) ? value : [];
}
