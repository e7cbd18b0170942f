import { describe, expect, it } from 'vitest';
import { boundaryFileLimitProblem, boundaryFileLimits } from '../../src/lib/boundaries/file-limits';
import { parseBoundaryFile } from '../../src/lib/boundaries/parse';
import { jsonDepth } from '../../src/lib/json-depth';

/** RFC 8259 §2: arrays and objects are the only structures that nest; strings may hold any bracket. */
describe('jsonDepth', () => {
  it.each([
    ['1', 0],
    ['[]', 1],
    ['{"a":[1,{"b":[]}]}', 4],
    ['["[[[[", "]]]]"]', 1],
    ['["\\"[[[[\\"", {}]', 2],
    ['{"type":"FeatureCollection","features":[{"type":"Feature","geometry":{"type":"MultiPolygon","coordinates":[[[[0,0]]]]}}]}', 8],
  ])('given %s, it counts %i levels', (text, depth) => {
    expect(jsonDepth(text)).toBe(depth);
  });

  it('stops counting past the limit asked for, so a 10 MB bracket run costs no more than needed', () => {
    expect(jsonDepth('['.repeat(1_000_000), 64)).toBe(65);
  });
});

describe('boundaryFileLimitProblem', () => {
  const polygon = (corners: number) => ({ type: 'Polygon', coordinates: [[...Array.from({ length: corners }, (_, i) => [-72 + i * 1e-6, 43 + (i % 2) * 1e-6]), [-72, 43]]] });

  it('given an ordinary parcel export, it finds nothing to refuse', () => {
    expect(boundaryFileLimitProblem(JSON.stringify({ type: 'FeatureCollection', features: [{ type: 'Feature', properties: {}, geometry: polygon(500) }] }))).toBeNull();
  });

  it(`given more than ${boundaryFileLimits.features} features, or more than ${boundaryFileLimits.positions} corners, it says which and how many`, () => {
    const many = JSON.stringify({ type: 'FeatureCollection', features: Array.from({ length: 501 }, () => ({ type: 'Feature', properties: {}, geometry: polygon(3) })) });
    expect(boundaryFileLimitProblem(many)?.message).toMatch(/501 features/);
    expect(boundaryFileLimitProblem(JSON.stringify(polygon(200_001)))?.message).toMatch(/200,002 corner points/);
  });

  it('given GeometryCollections nested 10 000 deep, parsing refuses the file instead of overflowing the stack', () => {
    const nested = `${'{"type":"GeometryCollection","geometries":['.repeat(10_000)}${']}'.repeat(10_000)}`;
    const result = parseBoundaryFile(nested, 'deep.geojson');
    expect(result.ok).toBe(false);
    expect(!result.ok && result.problems[0]?.code).toBe('file-too-complex');
  });

  it('given KML with more placemarks than the limit, or elements nested past it, it refuses it', () => {
    const placemarks = `<kml><Document>${'<Placemark><Polygon><outerBoundaryIs><LinearRing><coordinates>-72,43 -72.001,43 -72,43.001 -72,43</coordinates></LinearRing></outerBoundaryIs></Polygon></Placemark>'.repeat(501)}</Document></kml>`;
    expect(boundaryFileLimitProblem(placemarks)?.message).toMatch(/501 features/);
    const deep = `<kml>${'<MultiGeometry>'.repeat(100)}${'</MultiGeometry>'.repeat(100)}</kml>`;
    expect(boundaryFileLimitProblem(deep)?.code).toBe('file-too-complex');
  });
});
