import { DOMParser } from '@xmldom/xmldom';
import { describe, expect, it } from 'vitest';
import { exportFileName, toGeoJson, toGpx, toKml, type ExportParcel } from '../../src/lib/boundary-exports';
import { parseBoundaryFile } from '../../src/lib/boundaries/parse';
import { roughPlaces } from '../../src/components/map/rough-locations';

/*
 * The three download formats, read with a parser that is not ours (xmldom for KML and GPX, JSON.parse
 * for GeoJSON), and read back by the boundary importer. The parcel is written by hand: a square of
 * 0.01° drawn clockwise (north first, then east) with a triangular hole drawn counter-clockwise, so
 * the file must turn both round (RFC 7946 §3.1.6: exterior counter-clockwise, holes clockwise), and
 * one no-harvest zone. The coordinates carry 15 significant digits, so any rounding on the way shows.
 */
const west = -72.853439123456;
const south = 43.948708987654;
const east = west + 0.01;
const north = south + 0.01;
const hole = [[-72.85, 43.952], [-72.847, 43.952], [-72.847, 43.955], [-72.85, 43.952]];
const parcel: ExportParcel = {
  name: 'Birch & Beech <Lot>',
  description: 'North slope above the brook.',
  boundary: { type: 'MultiPolygon', coordinates: [[[[west, south], [west, north], [east, north], [east, south], [west, south]], hole]] },
  zones: [
    {
      name: 'Spring seep',
      reason: "Lady's slipper orchids",
      boundary: { type: 'MultiPolygon', coordinates: [[[[-72.852, 43.95], [-72.851, 43.95], [-72.851, 43.951], [-72.852, 43.95]]]] },
    },
  ],
};
const title = { name: 'Birch & Beech <Lot>', description: 'A test file.' };

/** The exterior, counter-clockwise from the same first corner: the hand-drawn ring reversed. */
const exterior = [[west, south], [east, south], [east, north], [west, north], [west, south]];
/** The hole, clockwise: reversed too. */
const holeClockwise = [[-72.85, 43.952], [-72.847, 43.955], [-72.847, 43.952], [-72.85, 43.952]];

const readXml = (text: string) => new DOMParser().parseFromString(text, 'text/xml');
const closeTo = (actual: number[][], expected: number[][]) => {
  expect(actual).toHaveLength(expected.length);
  actual.forEach((position, i) => {
    expect(Math.abs((position[0] as number) - (expected[i]?.[0] as number))).toBeLessThanOrEqual(1e-9);
    expect(Math.abs((position[1] as number) - (expected[i]?.[1] as number))).toBeLessThanOrEqual(1e-9);
  });
};

describe('boundary downloads', () => {
  it('given a parcel with a hole and a zone, the GeoJSON is an RFC 7946 FeatureCollection with the rings wound as §3.1.6 asks, names and reasons', () => {
    const json = JSON.parse(toGeoJson([parcel]));
    expect(json.type).toBe('FeatureCollection');
    expect(json).not.toHaveProperty('crs');
    expect(json.features).toHaveLength(2);
    const [land, zone] = json.features;
    expect(land.properties).toMatchObject({ name: 'Birch & Beech <Lot>', description: 'North slope above the brook.', kind: 'parcel' });
    expect(land.geometry).toEqual({ type: 'Polygon', coordinates: [exterior, holeClockwise] });
    expect(zone.properties).toMatchObject({ name: 'No-harvest zone: Spring seep', kind: 'no-harvest-zone', parcel: 'Birch & Beech <Lot>', reason: "Lady's slipper orchids" });
    expect(zone.properties.description).toBe("Lady's slipper orchids. Nothing may be taken in this zone of Birch & Beech <Lot>.");
    expect(zone.geometry).toEqual({ type: 'Polygon', coordinates: [[[-72.852, 43.95], [-72.851, 43.95], [-72.851, 43.951], [-72.852, 43.95]]] });
  });

  it('given the KML, xmldom reads one Placemark per parcel and zone, with escaped names, the reason and an inner boundary', () => {
    const doc = readXml(toKml([parcel], title));
    expect(doc.documentElement?.namespaceURI).toBe('http://www.opengis.net/kml/2.2');
    const placemarks = Array.from(doc.getElementsByTagName('Placemark'));
    expect(placemarks).toHaveLength(2);
    const name = (el: (typeof placemarks)[number]) => el.getElementsByTagName('name')[0]?.textContent;
    expect(placemarks.map(name)).toEqual(['Birch & Beech <Lot>', 'No-harvest zone: Spring seep']);
    expect(placemarks[1]?.getElementsByTagName('description')[0]?.textContent).toContain("Lady's slipper orchids");
    expect(placemarks[0]?.getElementsByTagName('innerBoundaryIs')).toHaveLength(1);
    const outer = placemarks[0]?.getElementsByTagName('outerBoundaryIs')[0]?.getElementsByTagName('coordinates')[0]?.textContent ?? '';
    closeTo(outer.trim().split(/\s+/).map((t) => t.split(',').map(Number)), exterior);
  });

  it('given the GPX, xmldom reads a track per ring, each ending on its first point, named for the parcel, its cut-out and its zone', () => {
    const doc = readXml(toGpx([parcel], title));
    expect(doc.documentElement?.getAttribute('version')).toBe('1.1');
    expect(doc.documentElement?.namespaceURI).toBe('http://www.topografix.com/GPX/1/1');
    const tracks = Array.from(doc.getElementsByTagName('trk'));
    expect(tracks.map((t) => t.getElementsByTagName('name')[0]?.textContent)).toEqual(['Birch & Beech <Lot>', 'Birch & Beech <Lot>: cut-out 1', 'No-harvest zone: Spring seep']);
    expect(tracks[2]?.getElementsByTagName('desc')[0]?.textContent).toContain("Lady's slipper orchids");
    const points = (i: number) => Array.from(tracks[i]?.getElementsByTagName('trkpt') ?? []).map((p) => [Number(p.getAttribute('lon')), Number(p.getAttribute('lat'))]);
    closeTo(points(0), exterior);
    closeTo(points(1), holeClockwise);
    expect(doc.getElementsByTagName('metadata')[0]?.getElementsByTagName('name')[0]?.textContent).toBe('Birch & Beech <Lot>');
  });

  it.each([
    ['geojson', () => toGeoJson([parcel])],
    ['kml', () => toKml([parcel], title)],
  ])('given the %s file, the boundary importer reads back the same polygon with its hole, and the zone', (format, write) => {
    const read = parseBoundaryFile(write(), `lot.${format}`);
    if (!read.ok) throw new Error(JSON.stringify(read.problems));
    expect(read.format).toBe(format);
    expect(read.features.map((f) => f.name)).toEqual(['Birch & Beech <Lot>', 'No-harvest zone: Spring seep']);
    const land = read.features[0]?.geometry;
    expect(land?.type).toBe('Polygon');
    const rings = land?.coordinates as number[][][];
    expect(rings).toHaveLength(2);
    closeTo(rings[0] ?? [], exterior);
    closeTo(rings[1] ?? [], holeClockwise);
  });

  it('given the GPX file, the boundary importer reads each ring back as a closed boundary of its own', () => {
    const read = parseBoundaryFile(toGpx([parcel], title), 'lot.gpx');
    if (!read.ok) throw new Error(JSON.stringify(read.problems));
    expect(read.format).toBe('gpx');
    expect(read.features.map((f) => f.name)).toEqual(['Birch & Beech <Lot>', 'Birch & Beech <Lot>: cut-out 1', 'No-harvest zone: Spring seep']);
    closeTo((read.features[0]?.geometry.coordinates as number[][][])[0] ?? [], exterior);
    closeTo((read.features[1]?.geometry.coordinates as number[][][])[0] ?? [], holeClockwise);
  });

  it('given parcel names, the file names are plain ASCII with hyphens', () => {
    expect(exportFileName('Farrand Sugarbush', 'kml')).toBe('farrand-sugarbush.kml');
    expect(exportFileName('Érable & Co. — lot 2', 'gpx')).toBe('erable-co-lot-2.gpx');
    expect(exportFileName('“”', 'geojson')).toBe('parcel.geojson');
  });
});

describe('rough locations on the find-land map', () => {
  it('given two parcels with the same rounded centre and one elsewhere, it makes two places, the shared one a 0.01° cell around the point', () => {
    const places = roughPlaces([
      { id: 'a', name: 'A', centre: [-72.85, 43.95], areaM2: 1 },
      { id: 'b', name: 'B', centre: [-72.84, 43.95], areaM2: 1 },
      { id: 'c', name: 'C', centre: [-72.85, 43.95], areaM2: 1 },
    ]);
    expect(places.map((p) => p.parcels.map((q) => q.id))).toEqual([['a', 'c'], ['b']]);
    const [[w, s], [e, n]] = places[0]?.cell ?? [[0, 0], [0, 0]];
    expect([w, s, e, n].map((v) => Number(v.toFixed(9)))).toEqual([-72.855, 43.945, -72.845, 43.955]);
  });
});
