import { readdirSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { parseBoundaryFile } from '../../src/lib/boundaries/parse';
import { problemFromPostgis } from '../../src/lib/boundaries/postgis-reasons';
import type { BoundaryGeometry } from '../../src/lib/boundaries/types';
import { checkBoundary, defaultBoundaryLimits, mergeFeatures, normalizeWinding, toMultiPolygon, zoneInsideParcel } from '../../src/lib/boundaries/validate';

const fixtures = fileURLToPath(new URL('../fixtures/boundaries', import.meta.url));
const folder = (name: string) => readdirSync(`${fixtures}/${name}`).sort();
function boundaryOf(path: string): BoundaryGeometry {
  const result = parseBoundaryFile(readFileSync(`${fixtures}/${path}`, 'utf8'), path);
  if (!result.ok) throw new Error(`${path} does not parse: ${JSON.stringify(result.problems)}`);
  const [only, ...more] = result.features;
  return more.length === 0 && only ? only.geometry : mergeFeatures(result.features);
}
const codes = (geometry: unknown, limits = defaultBoundaryLimits) => checkBoundary(geometry, limits).problems.map((problem) => problem.code);
const polygon = (...rings: number[][][]): BoundaryGeometry => ({ type: 'Polygon', coordinates: rings });
/** For shapes drawn on a grid of whole degrees, where only the rule under test should speak, not the area cap. */
const anySize = { maxVertices: 10_000, maxAreaHectares: 1e9 };

/** Each invalid fixture and the one problem it is there to show. */
const expectedProblem: Record<string, string> = {
  'bow-tie.geojson': 'self-intersection', // REFERENCES §4 bow-tie, scaled to lon/lat
  'crosses-antimeridian.geojson': 'crosses-antimeridian', // RFC 7946 §3.1.9
  'hole-crosses-the-edge.geojson': 'rings-cross',
  'hole-outside.geojson': 'hole-outside',
  'hole-touching-the-edge-twice.geojson': 'interior-disconnected',
  'nested-holes.geojson': 'holes-overlap',
  'out-of-range.geojson': 'out-of-range', // RFC 7946 §4: WGS 84 degrees
  'overlapping-parts.geojson': 'parts-overlap',
  'part-inside-part.geojson': 'parts-overlap',
  'ring-touches-itself.geojson': 'self-intersection',
  'swapped-lat-lon.geojson': 'swapped-coordinates', // RFC 7946 §3.1.1
  'too-few-positions.geojson': 'too-few-positions', // RFC 7946 §3.1.6
  'too-large.geojson': 'too-large',
  'unclosed-ring.geojson': 'unclosed-ring', // RFC 7946 §3.1.6
};

/** A regular n-gon of radius `r` degrees round a point in Vermont, closed (RFC 7946 §3.1.6). */
function circle(n: number, r = 0.01): BoundaryGeometry {
  const ring = Array.from({ length: n }, (_, i) => [-72.85 + r * Math.cos((2 * Math.PI * i) / n), 43.95 + r * Math.sin((2 * Math.PI * i) / n)]);
  return polygon([...ring, ring[0] as number[]]);
}

describe('checkBoundary on the fixture folders', () => {
  it.each(folder('valid'))('given valid/%s, it finds no problem', (file) => {
    expect(checkBoundary(boundaryOf(`valid/${file}`)).problems).toEqual([]);
  });

  it('given the invalid/ folder, every file has an expected problem listed here and nothing else is listed', () => {
    expect(Object.keys(expectedProblem).sort()).toEqual(folder('invalid'));
  });

  it.each(folder('invalid'))('given invalid/%s, it reports its expected problem with a message', (file) => {
    const { problems } = checkBoundary(boundaryOf(`invalid/${file}`));
    expect(problems.map((problem) => problem.code)).toContain(expectedProblem[file]);
    for (const problem of problems) expect(problem.message.length).toBeGreaterThan(40);
  });
});

describe('checkBoundary, one rule at a time', () => {
  it('given the REFERENCES §4 bow-tie scaled to lon/lat, it reports where the ring crosses itself: the image of (150 150)', () => {
    const [problem] = checkBoundary(boundaryOf('invalid/bow-tie.geojson')).problems;
    expect(problem).toMatchObject({ code: 'self-intersection', part: 1, ring: 1 });
    expect(problem?.at?.[0]).toBeCloseTo(-72.855, 9);
    expect(problem?.at?.[1]).toBeCloseTo(43.945, 9);
    expect(problem?.message).toMatch(/^Ring 1 \(the outer edge\) crosses itself near 43\.94500°N, 72\.85500°W/);
  });

  it('given a clockwise exterior or a counter-clockwise hole, it does not reject the winding (RFC 7946 §3.1.6: parsers SHOULD NOT)', () => {
    expect(codes(boundaryOf('valid/clockwise-exterior.geojson'))).toEqual([]);
    expect(codes(polygon([[0, 0], [0, 1], [1, 1], [1, 0], [0, 0]], [[0.2, 0.2], [0.4, 0.2], [0.4, 0.4], [0.2, 0.2]]), anySize)).toEqual([]);
  });

  it('given an unclosed ring, it reports it and leaves the input as it was', () => {
    const geometry = boundaryOf('invalid/unclosed-ring.geojson');
    const before = JSON.stringify(geometry);
    const [problem] = checkBoundary(geometry).problems;
    expect(problem).toMatchObject({ code: 'unclosed-ring', part: 1, ring: 1, at: [-72.852, 43.953] });
    expect(JSON.stringify(geometry)).toBe(before);
  });

  it('given a hole outside its exterior, it names ring 2 of part 1', () => {
    expect(checkBoundary(boundaryOf('invalid/hole-outside.geojson')).problems[0]).toMatchObject({ code: 'hole-outside', part: 1, ring: 2 });
  });

  it('given positions written [latitude, longitude] with a latitude past ±90, it says so (RFC 7946 §3.1.1)', () => {
    const [problem] = checkBoundary(boundaryOf('invalid/swapped-lat-lon.geojson')).problems;
    expect(problem?.code).toBe('swapped-coordinates');
    expect(problem?.message).toMatch(/^This file looks like \[latitude, longitude\]; GeoJSON is \[longitude, latitude\]/);
  });

  it('given a Vermont square written [latitude, longitude], which lands in Antarctica, it reports swapped-coordinates', () => {
    expect(codes(polygon([[43.951, -72.852], [43.951, -72.849], [43.953, -72.849], [43.953, -72.852], [43.951, -72.852]]))).toEqual(['swapped-coordinates']);
  });

  it('given a square on the Ross Ice Shelf at 170°E, it does not call it swapped (the swap would put latitude past 90)', () => {
    expect(codes(polygon([[170, -80], [170.1, -80], [170.1, -79.9], [170, -79.9], [170, -80]]))).toEqual([]);
  });

  it('given one latitude past 90 that swapping does not explain, it reports out-of-range with the position', () => {
    const [problem] = checkBoundary(polygon([[100, 10], [101, 10], [101, 95], [100, 10]])).problems;
    expect(problem).toMatchObject({ code: 'out-of-range', part: 1, ring: 1 });
    expect(problem?.message).toMatch(/^Position 3 of ring 1 .*latitude 95 is outside −90…90/);
  });

  it('given a circle of 100 000 points, it reports the vertex cap with the count and the cap, before the costly checks', () => {
    const { problems, vertexCount } = checkBoundary(circle(100_000));
    expect(vertexCount).toBe(100_001); // the closing position counts, as in ST_NPoints
    expect(problems).toHaveLength(1);
    expect(problems[0]?.code).toBe('too-many-vertices');
    expect(problems[0]?.message).toMatch(/100,001 points; the most we accept is 10,000/);
  });

  it('given exactly 10 000 positions, it accepts them (the cap is inclusive)', () => {
    expect(checkBoundary(circle(9_999))).toEqual({ problems: [], vertexCount: 10_000 });
  });

  it('given the REFERENCES §2 parcel ring of 87.616 ha (⚙ GeographicLib), it passes an 87.62 ha cap and fails an 87.61 ha cap', () => {
    const ring = boundaryOf('valid/references-parcel-ring.geojson');
    expect(codes(ring, { maxVertices: 10_000, maxAreaHectares: 87.62 })).toEqual([]);
    expect(codes(ring, { maxVertices: 10_000, maxAreaHectares: 87.61 })).toEqual(['too-large']);
  });

  it('given the GeographicLib test diamond of 24 619 419 146 m² (REFERENCES §2 ✔), it states that figure to the tenth of a hectare and the cap', () => {
    const [problem] = checkBoundary(polygon([[-1, 0], [0, -1], [1, 0], [0, 1], [-1, 0]])).problems;
    expect(problem?.code).toBe('too-large');
    const stated = Number(/about ([\d,.]+) ha/.exec(problem?.message ?? '')?.[1]?.replace(/,/g, ''));
    expect(stated).toBe(2_461_941.9); // 24 619 419 146 m² = 2 461 941.9146 ha, rounded to one decimal
    expect(problem?.message).toContain('10,000 ha');
  });

  it.each([
    ['a Point', 'not-a-polygon', { type: 'Point', coordinates: [1, 2] }],
    ['null', 'not-a-polygon', null],
    ['numbers as strings', 'bad-coordinates', { type: 'Polygon', coordinates: [[['0', '0'], ['1', '0'], ['1', '1'], ['0', '0']]] }],
    ['a NaN', 'bad-coordinates', { type: 'Polygon', coordinates: [[[0, 0], [1, Number.NaN], [1, 1], [0, 0]]] }],
    ['a Polygon with no rings', 'empty', { type: 'Polygon', coordinates: [] }],
  ])('given %s, it reports %s', (_, code, geometry) => {
    expect(codes(geometry, anySize)).toEqual([code]);
  });

  it('given a spike that doubles back along its own edge, it reports self-intersection', () => {
    expect(codes(polygon([[0, 0], [2, 0], [2, 2], [1, 1], [2, 2], [0, 2], [0, 0]]), anySize)).toContain('self-intersection');
  });

  it('given a repeated consecutive position, it accepts it as PostGIS does', () => {
    expect(codes(polygon([[0, 0], [1, 0], [1, 0], [1, 1], [0, 1], [0, 0]]), anySize)).toEqual([]);
  });
});

describe('normalizeWinding, toMultiPolygon and mergeFeatures', () => {
  it('given a clockwise exterior and a counter-clockwise hole, it returns a copy with the exterior counter-clockwise and the hole clockwise (RFC 7946 §3.1.6)', () => {
    const input = polygon([[0, 0], [0, 4], [4, 4], [4, 0], [0, 0]], [[1, 1], [2, 1], [2, 2], [1, 1]]);
    const output = normalizeWinding(input);
    expect(output).toEqual(polygon([[0, 0], [4, 0], [4, 4], [0, 4], [0, 0]], [[1, 1], [2, 2], [2, 1], [1, 1]]));
    expect(input.coordinates[0]?.[1]).toEqual([0, 4]);
  });

  it('given rings already wound as RFC 7946 asks, it returns them unchanged', () => {
    const geometry = boundaryOf('valid/polygon-with-hole.geojson');
    expect(normalizeWinding(geometry)).toEqual(geometry);
  });

  it('given a Polygon, toMultiPolygon wraps it as one part (RFC 7946 §3.1.7)', () => {
    const square = [[[0, 0], [1, 0], [1, 1], [0, 0]]];
    expect(toMultiPolygon({ type: 'Polygon', coordinates: square })).toEqual({ type: 'MultiPolygon', coordinates: [square] });
  });

  it('given the two meadows of the KML fixture, mergeFeatures makes one MultiPolygon of two parts in file order', () => {
    const result = parseBoundaryFile(readFileSync(`${fixtures}/kml/two-meadows-and-a-gate.kml`, 'utf8'));
    if (!result.ok) throw new Error('fixture does not parse');
    const merged = mergeFeatures(result.features);
    expect(merged.type).toBe('MultiPolygon');
    expect(merged.coordinates.map((part) => part[0]?.[1])).toEqual([[-72.817, 43.98], [-72.816, 43.975]]);
    expect(codes(merged)).toEqual([]);
  });
});

describe('zoneInsideParcel (PostGIS ST_CoveredBy is the authority)', () => {
  const parcel = polygon([[0, 0], [10, 0], [10, 10], [0, 10], [0, 0]], [[4, 4], [4, 6], [6, 6], [6, 4], [4, 4]]);
  it.each([
    ['inside, clear of the hole', true, polygon([[1, 1], [3, 1], [3, 3], [1, 3], [1, 1]])],
    ['along the parcel edge (a boundary point is covered, REFERENCES §4)', true, polygon([[0, 0], [3, 0], [3, 3], [0, 3], [0, 0]])],
    ['partly outside', false, polygon([[8, 8], [12, 8], [12, 12], [8, 12], [8, 8]])],
    ['inside the hole', false, polygon([[4.5, 4.5], [5.5, 4.5], [5.5, 5.5], [4.5, 5.5], [4.5, 4.5]])],
    ['round the hole, with every vertex in the parcel', false, polygon([[3, 3], [7, 3], [7, 7], [3, 7], [3, 3]])],
  ])('given a zone %s, it answers %s', (_, expected, zone) => {
    expect(zoneInsideParcel(zone, parcel)).toBe(expected);
  });

  it('given a zone spanning a concave notch, with every vertex on the parcel, it answers false', () => {
    const notched = polygon([[0, 0], [10, 0], [10, 10], [5, 5], [0, 10], [0, 0]]);
    expect(zoneInsideParcel(polygon([[0, 0], [10, 0], [10, 10], [0, 10], [0, 0]]), notched)).toBe(false);
  });
});

describe('problemFromPostgis', () => {
  it('given the ST_IsValidReason text of a bow-tie (starts with Self-intersection, REFERENCES §4), it says where and what to do', () => {
    const problem = problemFromPostgis('Self-intersection[-72.855 43.945]', [-72.855, 43.945]);
    expect(problem).toEqual({
      code: 'self-intersection',
      at: [-72.855, 43.945],
      message: 'Ring crosses itself near 43.94500°N, 72.85500°W; redraw that corner (PostGIS: Self-intersection[-72.855 43.945]).',
    });
  });

  it('given a reason it does not know, it keeps the text under invalid-geometry', () => {
    expect(problemFromPostgis('Something new', null)).toMatchObject({ code: 'invalid-geometry', message: expect.stringContaining('(PostGIS: Something new)') });
  });
});
