import { gpx, kml } from '@tmcw/togeojson';
import { DOMParser } from '@xmldom/xmldom';
import { collectGeoJson, type Collected } from './geojson';
import { geodesicDistanceM } from './geodesy';
import type { BoundaryProblem, Position } from './types';

/**
 * A walked track or route whose ends are this close is taken as a closed boundary. 25 m is twice the
 * worst phone error under leafy canopy (RMSE 5.4–12.6 m, Tomaštík et al. 2021, REFERENCES §5), so a
 * walk that came back to its start is not refused for GPS noise, and one that stopped short is.
 * Distance is geodesic on WGS 84 (geodesy.ts).
 */
export const gpxClosingToleranceM = 25;

export type XmlDocument = ReturnType<DOMParser['parseFromString']>;

/** An XML document, or the parser's first error. xmldom runs in the browser and in Node alike. */
export function readXml(text: string): { ok: true; doc: XmlDocument } | { ok: false; error: string } {
  const errors: string[] = [];
  try {
    const doc = new DOMParser({
      onError: (level, message) => {
        if (level !== 'warning') errors.push(message.replace(/^\[xmldom \w+\]\s*/, '').split('\n')[0] ?? message);
      },
    }).parseFromString(text, 'text/xml');
    if (errors.length > 0 || !doc.documentElement) return { ok: false, error: errors[0] ?? 'no root element' };
    return { ok: true, doc };
  } catch (error) {
    return { ok: false, error: errors[0] ?? (error instanceof Error ? error.message.split('\n')[0] ?? 'unreadable' : 'unreadable') };
  }
}

/**
 * KML Polygons (outer and inner boundaries) and MultiGeometry members, through togeojson. KML puts
 * positions as lon,lat[,alt] like GeoJSON (OGC KML 2.2, kml:coordinates). togeojson closes a LinearRing that
 * does not end where it began (KML requires it to); that is said in a note rather than done silently.
 */
export function collectKml(doc: XmlDocument): Collected {
  const collected = collectGeoJson(kml(doc), 'placemark');
  const rings = Array.from(doc.getElementsByTagName('LinearRing'));
  const unclosed = rings.filter((ring) => {
    const text = ring.getElementsByTagName('coordinates')[0]?.textContent ?? '';
    const tuples = text.trim().split(/\s+/).filter(Boolean).map((tuple) => tuple.split(',').slice(0, 2).map(Number));
    const [first, last] = [tuples[0], tuples[tuples.length - 1]];
    return tuples.length > 1 && first && last && (first[0] !== last[0] || first[1] !== last[1]);
  }).length;
  if (unclosed > 0) {
    collected.notes.push(`Closed ${unclosed} KML ring${unclosed === 1 ? '' : 's'} that did not end on ${unclosed === 1 ? 'its' : 'their'} first point.`);
  }
  return collected;
}

/**
 * GPX has no areas (GPX 1.1 schema: waypoints, routes, tracks), so a boundary is a walked track or a
 * route that returns to where it began: ends within 25 m are joined by repeating the first point
 * exactly, as RFC 7946 §3.1.6 needs; ends further apart are a problem. Waypoints are skipped with a note.
 */
export function collectGpx(doc: XmlDocument): Collected {
  const notes: string[] = [];
  const problems: BoundaryProblem[] = [];
  const polygons: unknown[] = [];
  let waypoints = 0;
  for (const [i, feature] of gpx(doc).features.entries()) {
    const { geometry, properties } = feature;
    const kind = properties?._gpxType === 'rte' ? 'route' : 'track';
    const name = typeof properties?.name === 'string' && properties.name.trim() !== '' ? properties.name.trim() : null;
    const label = name ? `The ${kind} “${name}”` : `${kind === 'route' ? 'Route' : 'Track'} ${i + 1}`;
    if (geometry?.type === 'Point') {
      waypoints += 1;
      continue;
    }
    // A track paused and resumed has several segments; walked in order they make one line.
    const line = geometry?.type === 'LineString' ? geometry.coordinates : geometry?.type === 'MultiLineString' ? geometry.coordinates.flat() : [];
    const points = line.map(([lon, lat]) => [lon, lat] as Position);
    const [first, last] = [points[0], points[points.length - 1]];
    if (!first || !last || points.length < 3) {
      problems.push({ code: 'no-polygon', message: `${label} has ${points.length} points; a boundary walk needs at least three. Record the walk again.` });
      continue;
    }
    const gap = geodesicDistanceM(first, last);
    if (gap > gpxClosingToleranceM) {
      problems.push({
        code: 'open-track',
        at: last,
        message: `${label} does not return to its start: its ends are ${Math.round(gap).toLocaleString('en-US')} m apart. A ${kind} is taken as a boundary only when its ends are within ${gpxClosingToleranceM} m; walk back to the starting point, or join the ends in a mapping program.`,
      });
      continue;
    }
    const closed = first[0] === last[0] && first[1] === last[1] ? points : [...points, first];
    notes.push(`${label} ends ${gap.toFixed(1)} m from its start, so it was taken as a closed boundary${closed === points ? '' : ' (joined back to its first point)'}.`);
    polygons.push({ type: 'Feature', properties: { name }, geometry: { type: 'Polygon', coordinates: [closed] } });
  }
  if (waypoints > 0) notes.push(`Skipped ${waypoints} waypoint${waypoints === 1 ? '' : 's'}: only a closed track or route can be a boundary.`);
  if (problems.length > 0) return { features: [], notes, problems };
  if (polygons.length === 0) {
    return {
      features: [], notes,
      problems: [{ code: 'no-polygon', message: `This GPX file has no track or route${waypoints > 0 ? `, only ${waypoints} waypoint${waypoints === 1 ? '' : 's'}` : ''}. Record the boundary as a track walked all the way round, or upload GeoJSON or KML.` }],
    };
  }
  const collected = collectGeoJson({ type: 'FeatureCollection', features: polygons }, 'track');
  return { ...collected, notes: [...notes, ...collected.notes] };
}
