import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import booleanPointInPolygon from '@turf/boolean-point-in-polygon';
import type { FeatureCollection, Polygon } from 'geojson';
import { describe, expect, it } from 'vitest';
import { readBaseLayer } from '../../src/components/map/base-layer';
import { GET } from '../../src/pages/tiles/base-features.json';
import type { APIContext } from 'astro';

const demoDir = join(import.meta.dirname, '..', '..', 'data', 'demo');
const file = JSON.parse(readFileSync(join(demoDir, 'base-features.geojson'), 'utf8'));
const parcels = (JSON.parse(readFileSync(join(demoDir, 'parcels.geojson'), 'utf8')) as FeatureCollection<Polygon, { slug: string }>).features;
const parcel = (slug: string) => parcels.find((p) => p.properties.slug === slug)!.geometry;

describe('readBaseLayer', () => {
  it('given the demo valley (data/demo/base-features.geojson), it reads a named brook, roads, trails and a ridge, with its credit', () => {
    const { lines, attribution } = readBaseLayer(file);
    const named = (kind: string) => lines.filter((l) => l.kind === kind).map((l) => l.name);
    expect(named('brook')).toEqual(['Hobblebush Brook']);
    expect(named('road')).toHaveLength(2);
    expect(named('trail').length).toBeGreaterThanOrEqual(2);
    expect(named('ridge')).toEqual(['Cobble Ridge']);
    expect(attribution).toMatch(/invented/);
  });

  it('given any line, it runs west to east, so a name along it is never upside down', () => {
    for (const { name, line } of readBaseLayer(file).lines) expect(line[0]![0], name).toBeLessThan(line[line.length - 1]![0]);
  });

  it('given the demo story, the brook runs through Alder Bottom (its flood plain) and the ridge through Cobble Ridge Lot', () => {
    const { lines } = readBaseLayer(file);
    const brook = lines.find((l) => l.kind === 'brook')!;
    const ridge = lines.find((l) => l.kind === 'ridge')!;
    expect(brook.line.some((p) => booleanPointInPolygon(p, parcel('alder-bottom')))).toBe(true);
    expect(ridge.line.some((p) => booleanPointInPolygon(p, parcel('cobble-ridge-lot')))).toBe(true);
  });

  it('given features of unknown kinds, without names, or with broken coordinates, and things that are not collections, it leaves them out', () => {
    const line = { type: 'LineString', coordinates: [[-72.9, 43.9], [-72.8, 43.95]] };
    const junk = {
      type: 'FeatureCollection',
      features: [
        { type: 'Feature', properties: { kind: 'railway', name: 'X' }, geometry: line },
        { type: 'Feature', properties: { kind: 'road' }, geometry: line },
        { type: 'Feature', properties: { kind: 'road', name: 'Y' }, geometry: { type: 'LineString', coordinates: [[-72.9, 'a'], [-72.8, 43.95]] } },
        { type: 'Feature', properties: { kind: 'road', name: 'Z' }, geometry: { type: 'Point', coordinates: [-72.9, 43.9] } },
        { type: 'Feature', properties: { kind: 'trail', name: 'Kept' }, geometry: { type: 'MultiLineString', coordinates: [line.coordinates] } },
      ],
    };
    expect(readBaseLayer(junk).lines.map((l) => l.name)).toEqual(['Kept']);
    for (const bad of [null, 42, 'x', { type: 'Feature' }, { type: 'FeatureCollection' }]) expect(readBaseLayer(bad)).toEqual({ lines: [], attribution: '' });
  });
});

describe('GET /tiles/base-features.json', () => {
  it('given a request, it answers the file as GeoJSON that caches for a year (its URL carries a hash of it)', async () => {
    const response = (await GET({} as unknown as APIContext)) as Response;
    expect(response.status).toBe(200);
    expect(response.headers.get('content-type')).toBe('application/geo+json; charset=utf-8');
    expect(response.headers.get('cache-control')).toBe('public, max-age=31536000, immutable');
    expect(JSON.parse(await response.text())).toEqual(file);
  });
});
