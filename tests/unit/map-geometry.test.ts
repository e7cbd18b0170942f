import type { Feature, FeatureCollection, MultiPolygon, Polygon } from 'geojson';
import { describe, expect, it } from 'vitest';
import { boundsOf, closeRing, describeDrawing, layersToMultiPolygon, splitParts, toLatLngs } from '../../src/components/map/geometry';
import { defaultView, viewKey, viewTargetFor } from '../../src/components/map/map-view';

// GeoJSON rules from RFC 7946: positions [lon, lat] (§3.1.1), closed rings of ≥ 4 positions (§3.1.6),
// a MultiPolygon is an array of Polygon coordinate arrays (§3.1.7).
const square: Polygon = { type: 'Polygon', coordinates: [[[-75, 45], [-74.99, 45], [-74.99, 45.01], [-75, 45.01], [-75, 45]]] };
const openSquare: Polygon = { type: 'Polygon', coordinates: [[[-72.86, 43.94], [-72.85, 43.94], [-72.85, 43.95], [-72.86, 43.95]]] };
const feature = (geometry: Feature['geometry']): Feature => ({ type: 'Feature', properties: {}, geometry });

describe('closeRing', () => {
  it('given an open ring, it repeats the first position at the end (RFC 7946 §3.1.6)', () => {
    expect(closeRing([[0, 0], [1, 0], [1, 1]])).toEqual([[0, 0], [1, 0], [1, 1], [0, 0]]);
  });

  it('given a closed ring or an empty one, it leaves it as it is, without touching the input', () => {
    const ring = [[0, 0], [1, 0], [1, 1], [0, 0]];
    const closed = closeRing(ring);
    expect(closed).toEqual(ring);
    closed[0]![0] = 9;
    expect(ring[0]).toEqual([0, 0]);
    expect(closeRing([])).toEqual([]);
  });
});

describe('layersToMultiPolygon', () => {
  it('given nothing drawn, it answers null', () => {
    expect(layersToMultiPolygon({ type: 'FeatureCollection', features: [] })).toBeNull();
    expect(layersToMultiPolygon([])).toBeNull();
  });

  it('given one drawn polygon, it answers one MultiPolygon with that part (RFC 7946 §3.1.7)', () => {
    expect(layersToMultiPolygon([feature(square)])).toEqual({ type: 'MultiPolygon', coordinates: [square.coordinates] });
  });

  it('given an open ring, it closes it', () => {
    const result = layersToMultiPolygon([feature(openSquare)]);
    expect(result?.coordinates[0]?.[0]).toEqual([[-72.86, 43.94], [-72.85, 43.94], [-72.85, 43.95], [-72.86, 43.95], [-72.86, 43.94]]);
  });

  it('given a polygon with a hole and a MultiPolygon from a cut, it keeps every part and hole in order', () => {
    const withHole: Polygon = {
      type: 'Polygon',
      coordinates: [square.coordinates[0]!, [[-74.998, 45.002], [-74.998, 45.004], [-74.996, 45.004], [-74.996, 45.002]]],
    };
    const twoParts: MultiPolygon = { type: 'MultiPolygon', coordinates: [openSquare.coordinates, square.coordinates] };
    const collection: FeatureCollection = { type: 'FeatureCollection', features: [feature(withHole), feature(twoParts)] };
    const result = layersToMultiPolygon(collection);
    expect(result?.coordinates).toHaveLength(3);
    expect(result?.coordinates[0]).toHaveLength(2);
    expect(result?.coordinates[0]?.[1]).toHaveLength(5);
    expect(result?.coordinates[1]?.[0]?.[4]).toEqual([-72.86, 43.94]);
  });

  it('given a nested group (Leaflet returns a FeatureCollection inside), lines and points, it takes only the areas', () => {
    const nested = { type: 'FeatureCollection', features: [feature({ type: 'GeometryCollection', geometries: [square, { type: 'LineString', coordinates: [[0, 0], [1, 1]] }] }), feature({ type: 'Point', coordinates: [0, 0] })] } as FeatureCollection;
    expect(layersToMultiPolygon(nested)).toEqual({ type: 'MultiPolygon', coordinates: [square.coordinates] });
  });

  it('given a polygon too short to enclose anything, or such a hole, it leaves them out', () => {
    const sliver: Polygon = { type: 'Polygon', coordinates: [[[0, 0], [1, 1]]] };
    const badHole: Polygon = { type: 'Polygon', coordinates: [square.coordinates[0]!, [[-74.998, 45.002], [-74.997, 45.003]]] };
    expect(layersToMultiPolygon([feature(sliver)])).toBeNull();
    expect(layersToMultiPolygon([feature(badHole)])?.coordinates[0]).toHaveLength(1);
  });
});

describe('boundsOf', () => {
  it('given areas, it answers the box around them as [[west, south], [east, north]]', () => {
    expect(boundsOf([{ geometry: square }, { geometry: openSquare }])).toEqual([[-75, 43.94], [-72.85, 45.01]]);
  });

  it('given no areas, it answers null', () => {
    expect(boundsOf([])).toBeNull();
    expect(boundsOf([{ geometry: null }])).toBeNull();
  });
});

describe('toLatLngs and splitParts', () => {
  it('given [lon, lat] positions, it hands Leaflet [lat, lon] by part and ring', () => {
    expect(toLatLngs(square)[0]?.[0]?.[1]).toEqual([45, -74.99]);
  });

  it('given a MultiPolygon, it splits it into one Polygon per part', () => {
    const parts = splitParts({ type: 'MultiPolygon', coordinates: [square.coordinates, openSquare.coordinates] });
    expect(parts).toEqual([square, openSquare]);
  });
});

describe('viewTargetFor', () => {
  it('given areas, it fits their box, in Leaflet order', () => {
    expect(viewTargetFor('features', [{ geometry: square }])).toEqual({ bounds: [[45, -75], [45.01, -74.99]] });
  });

  it('given nothing to show, it opens on the demo valley at 43.95°N 72.85°W, zoom 13', () => {
    expect(viewTargetFor('features', [])).toEqual(defaultView);
    expect(defaultView).toEqual({ center: [43.95, -72.85], zoom: 13 });
  });

  it('given a box from the page, it shows that box whatever the areas', () => {
    expect(viewTargetFor([[-73, 43], [-72, 44]], [{ geometry: square }])).toEqual({ bounds: [[43, -73], [44, -72]] });
  });

  it('given the same box twice, the view key stays the same; a new box changes it', () => {
    expect(viewKey(viewTargetFor('features', [{ geometry: square }]))).toBe(viewKey(viewTargetFor('features', [{ geometry: square }])));
    expect(viewKey(viewTargetFor('features', [{ geometry: square }]))).not.toBe(viewKey(viewTargetFor('features', [{ geometry: openSquare }])));
  });
});

describe('describeDrawing', () => {
  it('given drawings, it says how many areas and holes there are', () => {
    expect(describeDrawing(null)).toBe('Nothing drawn yet.');
    expect(describeDrawing({ type: 'MultiPolygon', coordinates: [square.coordinates] })).toBe('Drawn: 1 area.');
    expect(describeDrawing({ type: 'MultiPolygon', coordinates: [[...square.coordinates, openSquare.coordinates[0]!], square.coordinates] })).toBe('Drawn: 2 areas with 1 hole.');
  });
});
