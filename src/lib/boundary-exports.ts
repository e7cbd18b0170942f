import GeoJsonToGpx from '@dwayneparton/geojson-to-gpx';
import { DOMImplementation, XMLSerializer } from '@xmldom/xmldom';
import type { Feature, FeatureCollection, LineString, MultiPolygon, Polygon } from 'geojson';
import tokml from 'tokml';
import { normalizeWinding } from './boundaries/shape';
import type { MultiPolygonGeometry } from './boundaries/types';

/**
 * Parcel boundaries and their no-harvest zones as files for a GPS unit or a mapping program:
 * GeoJSON (RFC 7946), KML 2.2 (through tokml) and GPX 1.1 (through geojson-to-gpx). Pure: the same
 * files the boundary importer (src/lib/boundaries/parse.ts) reads back.
 */
export const exportFormats = ['geojson', 'kml', 'gpx'] as const;
export type ExportFormat = (typeof exportFormats)[number];

export const exportFormatNames: Record<ExportFormat, string> = { geojson: 'GeoJSON', kml: 'KML', gpx: 'GPX' };

/**
 * Media types: `application/geo+json` (RFC 7946 §12), the KML type OGC registered with IANA, and
 * `application/gpx+xml`, the type GPX files are served with (GPX has no IANA registration).
 */
export const exportContentTypes: Record<ExportFormat, string> = {
  geojson: 'application/geo+json; charset=utf-8',
  kml: 'application/vnd.google-earth.kml+xml; charset=utf-8',
  gpx: 'application/gpx+xml; charset=utf-8',
};

export type ExportZone = { name: string; reason: string; boundary: MultiPolygonGeometry };
export type ExportParcel = { name: string; description: string; boundary: MultiPolygonGeometry; zones: ExportZone[] };

/** Who the file is for, written as its title: one parcel for its landowner, or a forager's parcels. */
export type ExportTitle = { name: string; description: string };

type Properties = { name: string; description: string; kind: 'parcel' | 'no-harvest-zone'; parcel: string; reason?: string };

export const zoneFeatureName = (zone: { name: string }) => `No-harvest zone: ${zone.name}`;
const zoneDescription = (zone: ExportZone, parcelName: string) => {
  const reason = zone.reason.trim();
  return `${reason}${reason === '' || /[.!?]$/.test(reason) ? '' : '.'}${reason === '' ? '' : ' '}Nothing may be taken in this zone of ${parcelName}.`;
};

/**
 * One part is written as a Polygon, several as a MultiPolygon (RFC 7946 §3.1.6–7), with the
 * winding RFC 7946 §3.1.6 asks writers for: exterior rings counter-clockwise, holes clockwise.
 */
function asGeometry(boundary: MultiPolygonGeometry): Polygon | MultiPolygon {
  const wound = normalizeWinding(boundary);
  return wound.coordinates.length === 1 ? { type: 'Polygon', coordinates: wound.coordinates[0] ?? [] } : { type: 'MultiPolygon', coordinates: wound.coordinates };
}

/** Each parcel, then its zones, as one FeatureCollection in WGS 84 longitude and latitude (RFC 7946 §4). */
export function exportFeatures(parcels: readonly ExportParcel[]): FeatureCollection<Polygon | MultiPolygon, Properties> {
  const features: Feature<Polygon | MultiPolygon, Properties>[] = [];
  for (const parcel of parcels) {
    features.push({ type: 'Feature', properties: { name: parcel.name, description: parcel.description, kind: 'parcel', parcel: parcel.name }, geometry: asGeometry(parcel.boundary) });
    for (const zone of parcel.zones) {
      features.push({
        type: 'Feature',
        properties: { name: zoneFeatureName(zone), description: zoneDescription(zone, parcel.name), kind: 'no-harvest-zone', parcel: parcel.name, reason: zone.reason },
        geometry: asGeometry(zone.boundary),
      });
    }
  }
  return { type: 'FeatureCollection', features };
}

/** RFC 7946 GeoJSON. No `crs` member: RFC 7946 §4 coordinates are WGS 84 longitude, latitude. */
export function toGeoJson(parcels: readonly ExportParcel[]): string {
  return `${JSON.stringify(exportFeatures(parcels))}\n`;
}

const escapeXml = (text: string) => text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');

/** KML 2.2: one Placemark per parcel and per zone, holes as innerBoundaryIs, several parts as a MultiGeometry. */
export function toKml(parcels: readonly ExportParcel[], title: ExportTitle): string {
  // tokml writes the Document's name and description as they are; the Placemarks' it escapes itself.
  return tokml(exportFeatures(parcels), { documentName: escapeXml(title.name), documentDescription: escapeXml(title.description), name: 'name', description: 'description' });
}

/**
 * The rings of each area as GPX tracks, one track per ring: GPX 1.1 has waypoints, routes and
 * tracks but no areas, and a GPS unit draws a track as a line. A parcel's outer ring is named after
 * the parcel (with "part n of m" when it has several); a hole is a track of its own named as a
 * cut-out that is not part of the parcel. Every ring ends on its first point, so a reader sees a
 * closed walk.
 */
export function gpxTracks(parcels: readonly ExportParcel[]): FeatureCollection<LineString, { name: string; desc: string }> {
  const features: Feature<LineString, { name: string; desc: string }>[] = [];
  const track = (ring: number[][], name: string, desc: string) => features.push({ type: 'Feature', properties: { name, desc }, geometry: { type: 'LineString', coordinates: ring } });
  for (const parcel of parcels) {
    const parts = normalizeWinding(parcel.boundary).coordinates;
    let holes = 0;
    parts.forEach((polygon, p) => {
      polygon.forEach((ring, r) => {
        if (r === 0) track(ring, parts.length === 1 ? parcel.name : `${parcel.name} (part ${p + 1} of ${parts.length})`, parcel.description);
        else track(ring, `${parcel.name}: cut-out ${(holes += 1)}`, `A hole in ${parcel.name}: this ground is not part of the parcel.`);
      });
    });
    for (const zone of parcel.zones) {
      const rings = normalizeWinding(zone.boundary).coordinates.flat();
      rings.forEach((ring, i) => track(ring, rings.length === 1 ? zoneFeatureName(zone) : `${zoneFeatureName(zone)} (ring ${i + 1} of ${rings.length})`, zoneDescription(zone, parcel.name)));
    }
  }
  return { type: 'FeatureCollection', features };
}

/** GPX 1.1 with the file's title as its metadata and one track per ring (gpxTracks). */
export function toGpx(parcels: readonly ExportParcel[], title: ExportTitle): string {
  const implementation = new DOMImplementation() as unknown as globalThis.DOMImplementation;
  const doc = GeoJsonToGpx(gpxTracks(parcels), { creator: 'Tallywood', metadata: { name: title.name, desc: title.description } }, implementation);
  return new XMLSerializer().serializeToString(doc as unknown as Parameters<XMLSerializer['serializeToString']>[0]);
}

export function exportFile(parcels: readonly ExportParcel[], format: ExportFormat, title: ExportTitle): string {
  switch (format) {
    case 'geojson':
      return toGeoJson(parcels);
    case 'kml':
      return toKml(parcels, title);
    case 'gpx':
      return toGpx(parcels, title);
  }
}

/**
 * A file name of plain ASCII letters, digits and hyphens (so Content-Disposition needs no
 * `filename*`, RFC 6266 §4.3), from a parcel's name: "Farrand Sugarbush" → farrand-sugarbush.kml.
 */
export function exportFileName(base: string, format: ExportFormat): string {
  const slug = base
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 60)
    .replace(/-+$/, '');
  return `${slug || 'parcel'}.${format}`;
}
