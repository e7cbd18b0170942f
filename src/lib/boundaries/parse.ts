import { boundaryFileLimitProblem } from './file-limits';
import { collectGeoJson, type Collected } from './geojson';
import { collectGpx, collectKml, readXml } from './kml-gpx';
import type { BoundaryFeature, BoundaryProblem } from './types';

export type { BoundaryFeature, BoundaryProblem } from './types';

export type BoundaryFileFormat = 'geojson' | 'kml' | 'gpx';

export type ParseResult =
  | { ok: true; format: BoundaryFileFormat; features: BoundaryFeature[]; notes: string[] }
  | { ok: false; problems: BoundaryProblem[] };

const accepted = 'Upload the boundary as GeoJSON (.geojson or .json), KML (.kml) or GPX (.gpx).';
const formatNames: Record<BoundaryFileFormat, string> = { geojson: 'GeoJSON', kml: 'KML', gpx: 'GPX' };
const extensionFormats: Record<string, BoundaryFileFormat> = { geojson: 'geojson', json: 'geojson', kml: 'kml', gpx: 'gpx' };

/** Hints for files people often try, by extension, before the generic list of what is accepted. */
const extensionHints: Record<string, string> = {
  kmz: 'A KMZ is a zipped KML: unzip it and upload the .kml inside.',
  zip: 'A zip file cannot be read; if it holds a KML or a shapefile, export the boundary as GeoJSON or KML.',
  shp: 'Shapefiles cannot be read; export the boundary as GeoJSON from your mapping program.',
  csv: 'A table of points cannot be read as a boundary; draw the parcel as an area in a mapping program and export it as GeoJSON.',
  txt: 'A plain text file cannot be read as a boundary.',
};

const unsupported = (reason: string): ParseResult => ({ ok: false, problems: [{ code: 'unsupported-format', message: `${reason} ${accepted}` }] });

/**
 * Reads an uploaded boundary file: GeoJSON (RFC 7946), KML or GPX, told apart by its content, not its
 * name. Pure, for the browser (preview before upload) and the server (the upload endpoint) alike. The
 * areas come back as they are in the file, altitude dropped; run checkBoundary on them before saving.
 */
export function parseBoundaryFile(text: string, fileName?: string): ParseResult {
  const extension = fileName?.toLowerCase().match(/\.([a-z0-9]+)$/)?.[1] ?? '';
  const body = text.replace(/^\uFEFF/, '').trimStart();
  const hint = extensionHints[extension] ? `${extensionHints[extension]} ` : '';
  if (body === '') return unsupported('The file is empty.');
  if (body.startsWith('PK\u0003\u0004')) return unsupported(extensionHints[extension] ?? 'This is a zip archive (a KMZ or a zipped shapefile), which cannot be read.');
  // Binary files (PNG, PDF, shapefile…) show control characters that no text boundary format holds.
  if (/[\u0000-\u0008\u000E-\u001F]/.test(body.slice(0, 1024))) return unsupported(`${hint}This file is not text; it may be an image or a binary export.`);

  const limit = boundaryFileLimitProblem(body);
  if (limit) return { ok: false, problems: [limit] };

  let read: { format: BoundaryFileFormat; collected: Collected };
  const first = body[0];
  if (first === '{' || first === '[') {
    let value: unknown;
    try {
      value = JSON.parse(body);
    } catch (error) {
      return unsupported(`${hint}The file starts like JSON but cannot be read (${error instanceof Error ? error.message : 'syntax error'}).`);
    }
    read = { format: 'geojson', collected: collectGeoJson(value) };
  } else if (first === '<') {
    const xml = readXml(body);
    if (!xml.ok) return unsupported(`${hint}The file starts like XML but cannot be read (${xml.error}).`);
    const root = xml.doc.documentElement?.localName?.toLowerCase();
    if (root === 'kml') read = { format: 'kml', collected: collectKml(xml.doc) };
    else if (root === 'gpx') read = { format: 'gpx', collected: collectGpx(xml.doc) };
    else return unsupported(`${hint}This XML file is neither KML nor GPX (its root element is <${xml.doc.documentElement?.tagName ?? '?'}>).`);
  } else {
    return unsupported(hint ? hint.trim() : 'This file is not GeoJSON, KML or GPX.');
  }

  const { format, collected } = read;
  if (collected.problems.length > 0) return { ok: false, problems: collected.problems };
  const named = extensionFormats[extension];
  const notes = named && named !== format
    ? [`“${fileName}” is named like a ${formatNames[named]} file but holds ${formatNames[format]}; it was read as ${formatNames[format]}.`, ...collected.notes]
    : collected.notes;
  return { ok: true, format, features: collected.features, notes };
}
