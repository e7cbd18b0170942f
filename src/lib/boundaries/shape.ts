import { locateInPolygon, ringEdges, signedRingArea, sweepMeetings, type Edge } from './planar';
import type { BoundaryFeature, BoundaryGeometry, MultiPolygonGeometry, Position } from './types';

/** Polygons of either geometry type, as RFC 7946 §3.1.7 nests them. */
const polygonsOf = (geometry: BoundaryGeometry): number[][][][] =>
  geometry.type === 'Polygon' ? [geometry.coordinates] : geometry.coordinates;

const copyRing = (ring: number[][]) => ring.map((position) => [...position]);

/**
 * A copy with every exterior ring counter-clockwise and every hole clockwise, the winding RFC 7946
 * §3.1.6 asks writers to use. Readers must not reject the other winding, so checkBoundary accepts
 * it and this puts it right before the boundary is stored or drawn. Orientation is the sign of the
 * shoelace sum in lon/lat, which is the orientation on the ground for any ring short of a hemisphere.
 */
export function normalizeWinding<G extends BoundaryGeometry>(geometry: G): G {
  const orient = (polygon: number[][][]) =>
    polygon.map((ring, r) => {
      const area = signedRingArea(ring as Position[]);
      const wanted = r === 0 ? area >= 0 : area <= 0;
      return wanted ? copyRing(ring) : copyRing(ring).reverse();
    });
  return (geometry.type === 'Polygon'
    ? { type: 'Polygon', coordinates: orient(geometry.coordinates) }
    : { type: 'MultiPolygon', coordinates: geometry.coordinates.map(orient) }) as G;
}

/** A Polygon as a one-part MultiPolygon (RFC 7946 §3.1.7), the shape the parcels table stores. */
export function toMultiPolygon(geometry: BoundaryGeometry): MultiPolygonGeometry {
  return { type: 'MultiPolygon', coordinates: polygonsOf(geometry).map((polygon) => polygon.map(copyRing)) };
}

/**
 * All the areas of a file as the parts of one MultiPolygon, in file order. No union is taken: parts
 * that overlap stay as they are, and checkBoundary reports them as `parts-overlap`.
 */
export function mergeFeatures(features: readonly BoundaryFeature[]): MultiPolygonGeometry {
  return { type: 'MultiPolygon', coordinates: features.flatMap((feature) => toMultiPolygon(feature.geometry).coordinates) };
}

/**
 * Whether a no-harvest zone lies within its parcel, as far as a browser can tell: every vertex and
 * edge midpoint of the zone is in the parcel or on its edge (point in polygon with holes, RFC 7946
 * §3.1.6), no zone edge crosses a parcel edge, and no hole of the parcel lies inside the zone. The
 * authoritative answer is PostGIS ST_CoveredBy on the server (zoneWithinParcel).
 */
export function zoneInsideParcel(zone: BoundaryGeometry, parcel: BoundaryGeometry): boolean {
  const zoneParts = polygonsOf(zone) as Position[][][];
  const parcelParts = polygonsOf(parcel) as Position[][][];
  const inParcel = (point: Position) => parcelParts.some((polygon) => locateInPolygon(point, polygon) !== 'outside');
  for (const ring of zoneParts.flat()) {
    for (let i = 0; i < ring.length; i += 1) {
      const a = ring[i] as Position;
      const b = ring[i + 1];
      if (!inParcel(a)) return false;
      if (b && !inParcel([(a[0] + b[0]) / 2, (a[1] + b[1]) / 2])) return false;
    }
  }
  const zoneEdges = zoneParts.flatMap((polygon, p) => polygon.flatMap((ring, r) => ringEdges(ring, p, r)));
  const parcelEdges = parcelParts.flatMap((polygon, p) => polygon.flatMap((ring, r) => ringEdges(ring, -1 - p, r)));
  let crosses = false;
  sweepMeetings([...zoneEdges, ...parcelEdges], (e: Edge, f: Edge, meeting) => {
    if (e.part >= 0 !== f.part >= 0 && meeting.kind === 'proper') crosses = true;
    return !crosses;
  });
  if (crosses) return false;
  const parcelHoles = parcelParts.flatMap((polygon) => polygon.slice(1));
  return !parcelHoles.some((hole) => hole.some((point) => zoneParts.some((polygon) => locateInPolygon(point, polygon) === 'inside')));
}
