import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import booleanPointInPolygon from '@turf/boolean-point-in-polygon';
import type { FeatureCollection, MultiPolygon, Polygon } from 'geojson';
import { describe, expect, it } from 'vitest';
import { boundsOf } from '../../src/components/map/geometry';
import { chooseLabels, clipToBox, labelPointOf, labelSize, type LabelCandidate } from '../../src/components/map/labels';

// Inside-ness is judged by @turf/boolean-point-in-polygon, a general-purpose library (holes count as
// outside, RFC 7946 §3.1.6), never by our own code.
const demo = (file: string) => JSON.parse(readFileSync(join(import.meta.dirname, '..', '..', 'data', 'demo', file), 'utf8')) as FeatureCollection<Polygon | MultiPolygon, { name: string; slug?: string; parcelSlug?: string }>;
const parcels = demo('parcels.geojson').features;
const zones = demo('zones.geojson').features;

/** A C open to the east, 1 km across: its centroid and its box's centre both fall in the gap. */
const cShape: Polygon = {
  type: 'Polygon',
  coordinates: [[[-72.86, 43.94], [-72.85, 43.94], [-72.85, 43.942], [-72.858, 43.942], [-72.858, 43.948], [-72.85, 43.948], [-72.85, 43.95], [-72.86, 43.95], [-72.86, 43.94]]],
};

/** A square with a square hole in its middle, where a centroid lands. */
const frame: Polygon = {
  type: 'Polygon',
  coordinates: [
    [[-72.86, 43.94], [-72.85, 43.94], [-72.85, 43.95], [-72.86, 43.95], [-72.86, 43.94]],
    [[-72.857, 43.943], [-72.853, 43.943], [-72.853, 43.947], [-72.857, 43.947], [-72.857, 43.943]],
  ],
};

describe('labelPointOf', () => {
  it('given every demo parcel and zone (one with a hole, one in two parts), it puts the name inside the area, not in a hole', () => {
    for (const { geometry, properties } of [...parcels, ...zones]) {
      const at = labelPointOf(geometry);
      expect(booleanPointInPolygon(at, geometry), properties.name).toBe(true);
    }
  });

  it('given a C-shaped parcel, it puts the name in the C, not in the gap where the centroid is', () => {
    const at = labelPointOf(cShape);
    expect(booleanPointInPolygon(at, cShape)).toBe(true);
    // The gap runs from 72.858°W east; the C's back is 72.86–72.858°W, or the top and bottom arms.
    expect(booleanPointInPolygon([-72.854, 43.945], cShape)).toBe(false);
  });

  it('given a parcel with a hole in its middle, it puts the name in the frame', () => {
    const at = labelPointOf(frame);
    expect(booleanPointInPolygon(at, frame)).toBe(true);
  });

  it('given a parcel in two parts, it names the larger part', () => {
    const woodlots = parcels.find((p) => p.properties.slug === 'farrand-woodlots')!.geometry as MultiPolygon;
    const [north] = woodlots.coordinates;
    const at = labelPointOf(woodlots);
    expect(booleanPointInPolygon(at, { type: 'Polygon', coordinates: north! })).toBe(true);
  });

  it("given Cobble Ridge Lot and its no-harvest zones to avoid, it puts the name inside the parcel and outside both zones", () => {
    const ridge = parcels.find((p) => p.properties.slug === 'cobble-ridge-lot')!.geometry;
    const ridgeZones = zones.filter((z) => z.properties.parcelSlug === 'cobble-ridge-lot').map((z) => z.geometry);
    const at = labelPointOf(ridge, ridgeZones);
    expect(booleanPointInPolygon(at, ridge)).toBe(true);
    for (const zone of ridgeZones) expect(booleanPointInPolygon(at, zone)).toBe(false);
  });
});

/** A candidate for a square area `size` degrees across, named `text`, around [lon, lat]. */
const square = (id: string, text: string, [lon, lat]: [number, number], size: number): LabelCandidate => {
  const geometry: Polygon = { type: 'Polygon', coordinates: [[[lon, lat], [lon + size, lat], [lon + size, lat + size], [lon, lat + size], [lon, lat]]] };
  return { id, text, at: labelPointOf(geometry), bounds: boundsOf([{ geometry }])! };
};

describe('chooseLabels', () => {
  // Web Mercator: at zoom z the world is 256 × 2^z px wide (OSM "Slippy map tilenames"), so 0.01° of
  // longitude is 256 × 2^z × 0.01 / 360 px: 1.46 px at zoom 8, 23.3 px at zoom 12, 373 px at zoom 16.
  const lot = square('lot', 'Pine Lot', [-72.86, 43.94], 0.01);

  it('given a parcel smaller on screen than its name, it leaves the name out; zoomed in, it shows it', () => {
    expect(chooseLabels([lot], 8)).toEqual([]);
    expect(chooseLabels([lot], 16).map((l) => l.id)).toEqual(['lot']);
  });

  it('given a long name in a parcel too narrow for one line, it breaks the name in two', () => {
    // "Pelletier Hill Farm": one line 19 × 7.2 + 8 = 145 px; two ("Pelletier" / "Hill Farm") 9 × 7.2 + 8 = 73 px.
    expect(labelSize('Pelletier Hill Farm')).toEqual({ width: 145, height: 18 });
    expect(labelSize('Pelletier Hill Farm', 2)).toEqual({ width: 73, height: 34 });
    // At zoom 14 the 0.01° square is 93 px wide and about 130 px tall at 43.9°N.
    const [label] = chooseLabels([square('farm', 'Pelletier Hill Farm', [-72.85, 43.94], 0.01)], 14);
    expect(label).toMatchObject({ id: 'farm', lines: 2, width: 73 });
  });

  it('given two names that would overlap, it keeps the larger parcel\'s', () => {
    const big = square('big', 'Big Lot', [-72.86, 43.94], 0.02);
    const small = { ...square('small', 'Small Lot', [-72.86, 43.94], 0.01), at: big.at };
    expect(chooseLabels([small, big], 16).map((l) => l.id)).toEqual(['big']);
  });

  it('given a view that shows only part of a parcel, it leaves out a name that would be cut off at the edge', () => {
    // Pixel x of 72.855°W at zoom 16: (−72.855 + 180) / 360 × 256 × 65536 = 4 993 652.
    const x = ((-72.855 + 180) / 360) * 256 * 2 ** 16;
    const view = { left: x + 5, right: x + 2000, top: 0, bottom: 1e9 };
    expect(chooseLabels([lot], 16, view)).toEqual([]);
    expect(chooseLabels([lot], 16, { ...view, left: x - 2000 }).map((l) => l.id)).toEqual(['lot']);
  });
});

describe('clipToBox', () => {
  const box = (w: number, s: number, e: number, n: number): Polygon => ({ type: 'Polygon', coordinates: [[[w, s], [e, s], [e, n], [w, n], [w, s]]] });

  it("given a view over one corner of Cobble Ridge Lot, the name's point for the part in view is inside both the parcel and the view", () => {
    const ridge = parcels.find((p) => p.properties.slug === 'cobble-ridge-lot')!.geometry;
    // A box over the lot's south-east corner (the lot spans 72.8748–72.8553°W, 43.9497–43.9615°N).
    const view: [[number, number], [number, number]] = [[-72.862, 43.948], [-72.85, 43.955]];
    const seen = clipToBox(ridge, view)!;
    const at = labelPointOf(seen);
    expect(booleanPointInPolygon(at, ridge)).toBe(true);
    expect(booleanPointInPolygon(at, box(-72.862, 43.948, -72.85, 43.955))).toBe(true);
  });

  it('given a box that misses the area, it answers null; given one around it all, the same outline', () => {
    expect(clipToBox(frame, [[-72.0, 43.0], [-71.9, 43.1]])).toBeNull();
    const whole = clipToBox(frame, [[-73, 43], [-72, 44]])!;
    expect(whole.coordinates).toEqual([frame.coordinates]);
  });

  it('given a box inside the hole of a framed parcel, it answers the hole cut to the box, so no point of it is in the parcel', () => {
    const seen = clipToBox(frame, [[-72.856, 43.944], [-72.854, 43.946]]);
    // The outer ring covers the box whole and the hole covers it whole: outer and hole are the same box.
    expect(seen?.type).toBe('MultiPolygon');
    const [outer, hole] = (seen as MultiPolygon).coordinates[0]!;
    expect(hole).toBeDefined();
    expect(new Set(outer!.map((p) => p.join(',')))).toEqual(new Set(hole!.map((p) => p.join(','))));
  });
});
