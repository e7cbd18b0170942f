/**
 * The land under the parcels when no tile server is configured: named brooks, roads, trails and
 * ridge lines from a GeoJSON file (data/demo/base-features.geojson, served at /tiles/base-features.json).
 * Reading the file is pure and free of Leaflet; BaseLayer.tsx draws what this returns.
 */

export type BaseKind = 'brook' | 'road' | 'trail' | 'ridge';
export const baseKinds: readonly BaseKind[] = ['brook', 'road', 'trail', 'ridge'];

export type BaseLine = {
  kind: BaseKind;
  name: string;
  /** [lon, lat] positions, ordered west to east so a name written along the line is never upside down. */
  line: [number, number][];
};

export type BaseLayerData = { lines: BaseLine[]; attribution: string };

const isKind = (value: unknown): value is BaseKind => typeof value === 'string' && (baseKinds as readonly string[]).includes(value);

function readPosition(value: unknown): [number, number] | null {
  if (!Array.isArray(value) || value.length < 2) return null;
  const [lon, lat] = value as unknown[];
  return typeof lon === 'number' && typeof lat === 'number' && Number.isFinite(lon) && Number.isFinite(lat) ? [lon, lat] : null;
}

function readLine(value: unknown): [number, number][] | null {
  if (!Array.isArray(value)) return null;
  const line = value.map(readPosition);
  return line.length >= 2 && line.every((p) => p !== null) ? (line as [number, number][]) : null;
}

/** West to east (RFC 7946 gives a LineString no direction that matters here). */
function westToEast(line: [number, number][]): [number, number][] {
  const first = line[0]!;
  const last = line[line.length - 1]!;
  return first[0] > last[0] ? [...line].reverse() : line;
}

/**
 * The lines of a FeatureCollection whose features are LineStrings or MultiLineStrings with
 * properties `kind` (brook, road, trail, ridge) and `name`. Anything else is left out, so a
 * hand-edited file with a mistake draws what it can. The collection's own `attribution` member
 * credits it on the map.
 */
export function readBaseLayer(json: unknown): BaseLayerData {
  const collection = json as { type?: unknown; features?: unknown; attribution?: unknown } | null;
  if (!collection || collection.type !== 'FeatureCollection' || !Array.isArray(collection.features)) return { lines: [], attribution: '' };
  const lines: BaseLine[] = [];
  for (const feature of collection.features as { geometry?: { type?: unknown; coordinates?: unknown }; properties?: { kind?: unknown; name?: unknown } }[]) {
    const kind = feature?.properties?.kind;
    const name = feature?.properties?.name;
    if (!isKind(kind) || typeof name !== 'string') continue;
    const geometry = feature.geometry;
    const parts = geometry?.type === 'LineString' ? [geometry.coordinates] : geometry?.type === 'MultiLineString' && Array.isArray(geometry.coordinates) ? geometry.coordinates : [];
    for (const part of parts) {
      const line = readLine(part);
      if (line) lines.push({ kind, name, line: westToEast(line) });
    }
  }
  return { lines, attribution: typeof collection.attribution === 'string' ? collection.attribution : '' };
}
