import { readdirSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import geodesic from 'geographiclib-geodesic';
import { describe, expect, it } from 'vitest';
import { parseBoundaryFile, type ParseResult } from '../../src/lib/boundaries/parse';

const fixtures = fileURLToPath(new URL('../fixtures/boundaries', import.meta.url));
const folder = (name: string) => readdirSync(`${fixtures}/${name}`).sort();
const read = (path: string) => readFileSync(`${fixtures}/${path}`, 'utf8');
const parseFixture = (path: string) => parseBoundaryFile(read(path), path.split('/').pop());

function parsed(result: ParseResult) {
  if (!result.ok) throw new Error(`expected the file to parse: ${JSON.stringify(result.problems)}`);
  return result;
}
function refused(result: ParseResult) {
  if (result.ok) throw new Error('expected the file to be refused');
  return result.problems;
}
/** GeographicLib's WGS 84 geodesic distance (geographiclib-geodesic 2.2.0, REFERENCES §2), which takes (lat, lon). */
const geodesicDistance = ([lon1, lat1]: number[], [lon2, lat2]: number[]) =>
  geodesic.Geodesic.WGS84.Inverse(lat1 ?? 0, lon1 ?? 0, lat2 ?? 0, lon2 ?? 0).s12 ?? Number.NaN;
const metresIn = (text: string) => Number(/([\d.,]+) m\b/.exec(text)?.[1]?.replace(/,/g, ''));

describe('parseBoundaryFile on the GeoJSON fixtures', () => {
  it.each([...folder('valid').map((f) => `valid/${f}`), ...folder('invalid').map((f) => `invalid/${f}`)])(
    'given %s, it reads it as GeoJSON with at least one area (validity is checkBoundary’s job)',
    (path) => {
      const result = parsed(parseFixture(path));
      expect(result.format).toBe('geojson');
      expect(result.features.length).toBeGreaterThan(0);
    },
  );

  it('given a woodlot surveyed with altitudes, it drops the third number of every position (RFC 7946 §3.1.1) and keeps the name', () => {
    const [feature] = parsed(parseFixture('valid/hemlock-woodlot.geojson')).features;
    expect(feature?.name).toBe('Hemlock woodlot');
    const ring = feature?.geometry.coordinates[0] as number[][];
    expect(ring[0]).toEqual([-72.71234, 44.08021]);
    expect(ring.every((position) => position.length === 2)).toBe(true);
  });

  it('given a bare Polygon geometry, it returns one unnamed feature', () => {
    const [feature] = parsed(parseFixture('valid/references-parcel-ring.geojson')).features;
    expect(feature).toEqual({ name: null, geometry: { type: 'Polygon', coordinates: [[[-75, 45], [-74.99, 45], [-74.99, 45.01], [-75, 45.01], [-75, 45]]] } });
  });

  it('given points and lines beside a polygon, it skips them and says how many and why', () => {
    const text = JSON.stringify({
      type: 'FeatureCollection',
      features: [
        { type: 'Feature', properties: { name: 'Gate' }, geometry: { type: 'Point', coordinates: [-72.85, 43.95] } },
        { type: 'Feature', properties: { name: 'Brook' }, geometry: { type: 'LineString', coordinates: [[-72.85, 43.95], [-72.84, 43.96]] } },
        { type: 'Feature', properties: { title: 'Titled lot' }, geometry: { type: 'Polygon', coordinates: [[[0, 0], [1, 0], [1, 1], [0, 0]]] } },
      ],
    });
    const result = parsed(parseBoundaryFile(text, 'lot.geojson'));
    expect(result.features.map((feature) => feature.name)).toEqual(['Titled lot']);
    expect(result.notes).toEqual([expect.stringMatching(/^Skipped 2 features .*1 Point, 1 LineString.*Polygon or MultiPolygon/)]);
  });

  it('given a GeometryCollection of two polygons and a point, it flattens the polygons and skips the point', () => {
    const square = [[[0, 0], [1, 0], [1, 1], [0, 1], [0, 0]]];
    const text = JSON.stringify({
      type: 'Feature', properties: { name: 'Mixed' },
      geometry: { type: 'GeometryCollection', geometries: [{ type: 'Polygon', coordinates: square }, { type: 'Point', coordinates: [5, 5] }, { type: 'MultiPolygon', coordinates: [square] }] },
    });
    const result = parsed(parseBoundaryFile(text));
    expect(result.features.map((feature) => [feature.name, feature.geometry.type])).toEqual([['Mixed', 'Polygon'], ['Mixed', 'MultiPolygon']]);
    expect(result.notes[0]).toMatch(/^Skipped 1 feature that is not an area \(1 Point\)/);
  });

  it('given a file with only points, it refuses it as no-polygon', () => {
    const text = JSON.stringify({ type: 'FeatureCollection', features: [{ type: 'Feature', properties: {}, geometry: { type: 'Point', coordinates: [1, 2] } }] });
    expect(refused(parseBoundaryFile(text)).map((problem) => problem.code)).toEqual(['no-polygon']);
  });

  it('given a legacy crs member naming CRS84 or EPSG:4326, it ignores it (RFC 7946 App. B.1)', () => {
    for (const name of ['urn:ogc:def:crs:OGC:1.3:CRS84', 'urn:ogc:def:crs:EPSG::4326', 'EPSG:4326']) {
      const text = JSON.stringify({ type: 'Polygon', crs: { type: 'name', properties: { name } }, coordinates: [[[0, 0], [1, 0], [1, 1], [0, 0]]] });
      expect(parseBoundaryFile(text).ok).toBe(true);
    }
  });

  it('given a crs member naming British National Grid, it refuses the file as unsupported-crs and names the system', () => {
    const text = JSON.stringify({ type: 'FeatureCollection', crs: { type: 'name', properties: { name: 'urn:ogc:def:crs:EPSG::27700' } }, features: [] });
    const [problem] = refused(parseBoundaryFile(text));
    expect(problem?.code).toBe('unsupported-crs');
    expect(problem?.message).toContain('EPSG::27700');
  });
});

describe('parseBoundaryFile on KML (through @tmcw/togeojson)', () => {
  it('given a Polygon with an inner boundary, it keeps the hole and drops the altitudes', () => {
    const result = parsed(parseFixture('kml/sugarbush-with-inner-boundary.kml'));
    expect(result.format).toBe('kml');
    expect(result.features).toEqual([{
      name: 'Maple Hollow sugarbush',
      geometry: {
        type: 'Polygon',
        coordinates: [
          [[-72.87, 43.96], [-72.865, 43.96], [-72.865, 43.964], [-72.87, 43.964], [-72.87, 43.96]],
          [[-72.868, 43.961], [-72.868, 43.962], [-72.867, 43.962], [-72.867, 43.961], [-72.868, 43.961]],
        ],
      },
    }]);
  });

  it('given a MultiGeometry of two polygons and a Placemark Point, it returns both polygons and notes the skipped point', () => {
    const result = parsed(parseFixture('kml/two-meadows-and-a-gate.kml'));
    expect(result.features).toEqual([
      { name: 'Upper and lower meadow', geometry: { type: 'Polygon', coordinates: [[[-72.82, 43.98], [-72.817, 43.98], [-72.817, 43.982], [-72.82, 43.982], [-72.82, 43.98]]] } },
      { name: 'Upper and lower meadow', geometry: { type: 'Polygon', coordinates: [[[-72.82, 43.975], [-72.816, 43.975], [-72.816, 43.978], [-72.82, 43.978], [-72.82, 43.975]]] } },
    ]);
    expect(result.notes).toEqual([expect.stringMatching(/^Skipped 1 placemark that is not an area \(1 Point\)/)]);
  });

  it('given KML whose ring does not end on its first point, it says in a note that the ring was closed', () => {
    const text = read('kml/sugarbush-with-inner-boundary.kml').replace('-72.8700,43.9640,0 -72.8700,43.9600,0', '-72.8700,43.9640,0');
    const result = parsed(parseBoundaryFile(text, 'open.kml'));
    expect(result.features[0]?.geometry.coordinates[0]).toEqual([[-72.87, 43.96], [-72.865, 43.96], [-72.865, 43.964], [-72.87, 43.964], [-72.87, 43.96]]);
    expect(result.notes).toEqual([expect.stringMatching(/^Closed 1 KML ring/)]);
  });
});

describe('parseBoundaryFile on GPX', () => {
  const walk = [
    [-72.86, 43.97], [-72.8595, 43.97002], [-72.859, 43.97001], [-72.85905, 43.9704], [-72.85902, 43.9708],
    [-72.85955, 43.97083], [-72.86003, 43.97079], [-72.86001, 43.9704], [-72.86003, 43.97003],
  ];

  it('given a track whose ends are 4.1 m apart (under 25 m), it closes the ring exactly on the first point and says so', () => {
    const result = parsed(parseFixture('gpx/closed-walk.gpx'));
    expect(result.format).toBe('gpx');
    expect(result.features).toEqual([{ name: 'Kidder lot boundary', geometry: { type: 'Polygon', coordinates: [[...walk, walk[0]]] } }]);
    const closing = result.notes.find((note) => note.includes('closed boundary')) ?? '';
    // The note rounds the WGS 84 geodesic distance (REFERENCES §2) to 0.1 m.
    expect(Math.abs(metresIn(closing) - geodesicDistance(walk[0] ?? [], walk[8] ?? []))).toBeLessThanOrEqual(0.05);
    expect(result.notes).toContainEqual(expect.stringMatching(/^Skipped 1 waypoint/));
  });

  it('given a track that stops 300 m from its start, it refuses it as open-track and gives the distance in metres', () => {
    const [problem] = refused(parseFixture('gpx/open-walk.gpx'));
    expect(problem?.code).toBe('open-track');
    expect(problem?.message).toMatch(/does not return to its start/);
    const expected = geodesicDistance([-72.86, 43.97], [-72.8599, 43.9727]); // GeographicLib, REFERENCES §2
    expect(Math.abs(metresIn(problem?.message ?? '') - expected)).toBeLessThanOrEqual(0.5); // the message rounds to the metre
  });

  it('given a GPX file of waypoints only, it refuses it as no-polygon', () => {
    const text = '<?xml version="1.0"?><gpx version="1.1" xmlns="http://www.topografix.com/GPX/1/1"><wpt lat="43.97" lon="-72.86"/></gpx>';
    expect(refused(parseBoundaryFile(text, 'corners.gpx')).map((problem) => problem.code)).toEqual(['no-polygon']);
  });
});

describe('parseBoundaryFile on anything else', () => {
  it.each(folder('other'))('given other/%s, it refuses it as unsupported-format and lists the accepted formats', (file) => {
    const problems = refused(parseFixture(`other/${file}`));
    expect(problems.map((problem) => problem.code)).toEqual(['unsupported-format']);
    expect(problems[0]?.message).toMatch(/GeoJSON.*KML.*GPX/);
  });

  it.each([
    ['an empty file', ''],
    ['plain words', 'North line follows the stone wall to the big oak.'],
    ['JSON that is not GeoJSON', '{"rows": [[43.95, -72.85]]}'],
    ['a JSON array', '[[-72.85, 43.95], [-72.84, 43.96]]'],
    ['XML that is neither KML nor GPX', '<svg xmlns="http://www.w3.org/2000/svg"><path d="M0 0L1 1"/></svg>'],
  ])('given %s, it refuses it as unsupported-format', (_, text) => {
    expect(refused(parseBoundaryFile(text)).map((problem) => problem.code)).toEqual(['unsupported-format']);
  });

  it('given KML content under a .geojson name, it goes by the content and notes the mismatch', () => {
    const result = parsed(parseBoundaryFile(read('kml/sugarbush-with-inner-boundary.kml'), 'sugarbush.geojson'));
    expect(result.format).toBe('kml');
    expect(result.notes[0]).toMatch(/named like a GeoJSON file but holds KML/);
  });

  it('given a GeoJSON file with a byte-order mark, it reads it', () => {
    expect(parsed(parseBoundaryFile(`\uFEFF${read('valid/square.geojson')}`)).format).toBe('geojson');
  });
});
