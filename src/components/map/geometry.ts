import type { Feature, GeoJSON, Geometry, MultiPolygon, Polygon, Position } from 'geojson';

/**
 * Pure GeoJSON helpers for the map island, free of Leaflet so they run (and are tested) anywhere.
 * Positions are [lon, lat] (RFC 7946 §3.1.1); Leaflet's [lat, lon] appears only in `toLatLngs`.
 */

export type Area = Polygon | MultiPolygon;
/** [[west, south], [east, north]], in [lon, lat] order like every position here. */
export type LonLatBounds = [[number, number], [number, number]];

const samePosition = (a: Position | undefined, b: Position | undefined) => !!a && !!b && a[0] === b[0] && a[1] === b[1];

/** A ring whose last position repeats its first (RFC 7946 §3.1.6); an empty ring stays empty. */
export function closeRing(ring: readonly Position[]): Position[] {
  const copy = ring.map((p) => [...p]);
  const first = copy[0];
  if (first && !samePosition(first, copy[copy.length - 1])) copy.push([...first]);
  return copy;
}

/** A closed ring has at least four positions (RFC 7946 §3.1.6); whether they enclose anything is the server's check. */
const isUsableRing = (ring: Position[]) => ring.length >= 4;

/** The polygons of an area, as MultiPolygon parts. */
export function partsOf(area: Area): Position[][][] {
  return area.type === 'Polygon' ? [area.coordinates] : area.coordinates;
}

/**
 * One part with closed rings; a part whose outer ring is too short to enclose anything is dropped,
 * and so is a hole that short.
 */
function closePart(part: readonly (readonly Position[])[]): Position[][] | null {
  const [outer, ...holes] = part.map(closeRing);
  if (!outer || !isUsableRing(outer)) return null;
  return [outer, ...holes.filter(isUsableRing)];
}

/** Every Polygon and MultiPolygon in a GeoJSON object, through collections and features. */
function areasIn(item: GeoJSON | null | undefined): Area[] {
  if (!item) return [];
  switch (item.type) {
    case 'FeatureCollection':
      return item.features.flatMap(areasIn);
    case 'Feature':
      return areasIn(item.geometry);
    case 'GeometryCollection':
      return item.geometries.flatMap(areasIn);
    case 'Polygon':
    case 'MultiPolygon':
      return [item];
    default:
      return [];
  }
}

/**
 * The areas of drawn layers (their toGeoJSON()) as ONE MultiPolygon with closed rings, or null when
 * nothing is drawn. Parts are collected, not dissolved: overlapping parts stay as drawn, for the
 * server's boundary check to report. Lines, points and empty shapes are left out.
 */
export function layersToMultiPolygon(input: GeoJSON | readonly (Feature | Geometry)[]): MultiPolygon | null {
  const areas = 'type' in input ? areasIn(input) : input.flatMap(areasIn);
  const parts: Position[][][] = [];
  for (const area of areas) {
    for (const part of partsOf(area)) {
      const closed = closePart(part);
      if (closed) parts.push(closed);
    }
  }
  return parts.length > 0 ? { type: 'MultiPolygon', coordinates: parts } : null;
}

/** Each part of an area on its own, so a landowner can move or remove one part of many. */
export function splitParts(area: Area): Polygon[] {
  return partsOf(area).map((coordinates) => ({ type: 'Polygon', coordinates }));
}

/** The box around every position of the areas, or null when there are none. */
export function boundsOf(items: readonly { geometry: Area | null | undefined }[]): LonLatBounds | null {
  let west = Infinity;
  let south = Infinity;
  let east = -Infinity;
  let north = -Infinity;
  for (const { geometry } of items) {
    if (!geometry) continue;
    for (const part of partsOf(geometry)) {
      for (const ring of part) {
        for (const [lon, lat] of ring) {
          if (lon === undefined || lat === undefined || !Number.isFinite(lon) || !Number.isFinite(lat)) continue;
          west = Math.min(west, lon);
          east = Math.max(east, lon);
          south = Math.min(south, lat);
          north = Math.max(north, lat);
        }
      }
    }
  }
  return west <= east ? [[west, south], [east, north]] : null;
}

/** Leaflet's nesting of an area: parts → rings → [lat, lon]. */
export function toLatLngs(area: Area): [number, number][][][] {
  return partsOf(area).map((part) => part.map((ring) => ring.map(([lon, lat]) => [lat ?? 0, lon ?? 0] as [number, number])));
}

/** The number of parts and holes in a MultiPolygon, for a sentence a screen reader can say. */
export function describeDrawing(drawing: MultiPolygon | null): string {
  if (!drawing) return 'Nothing drawn yet.';
  const parts = drawing.coordinates.length;
  const holes = drawing.coordinates.reduce((sum, part) => sum + Math.max(0, part.length - 1), 0);
  const partText = parts === 1 ? '1 area' : `${parts} areas`;
  const holeText = holes === 0 ? '' : holes === 1 ? ' with 1 hole' : ` with ${holes} holes`;
  return `Drawn: ${partText}${holeText}.`;
}
