import { jsonDepth, maxJsonDepth } from '../json-depth';
import type { BoundaryProblem } from './types';

/**
 * What one uploaded boundary file may hold, counted in its text before it is parsed into objects:
 * a parcel export is a handful of areas of a few thousand corners. A file past these is refused with
 * a problem a person can act on, before the parser and the code that walks its result spend memory
 * and stack on it.
 */
export const boundaryFileLimits = { features: 500, positions: 200_000, depth: maxJsonDepth } as const;

const count = (text: string, pattern: RegExp) => {
  let n = 0;
  for (const _ of text.matchAll(pattern)) n++;
  return n;
};

/** How deeply an XML text nests its elements (comments, declarations and self-closing tags aside). */
function xmlDepth(text: string, stopAbove: number): number {
  let depth = 0;
  let deepest = 0;
  for (const tag of text.matchAll(/<(\/?)([A-Za-z_][\w:.-]*)[^>]*?(\/?)>/g)) {
    if (tag[1]) depth--;
    else if (!tag[3]) depth++;
    if (depth > deepest) deepest = depth;
    if (deepest > stopAbove) break;
  }
  return deepest;
}

const tooMuch = (message: string): BoundaryProblem => ({ code: 'file-too-complex', message });

/**
 * The first limit a boundary file's text passes, as a problem; null when it is within them all.
 * Counts are upper bounds read off the text: GeoJSON positions are the `[` that open a number,
 * KML positions the "x,y" pairs, GPX positions its points.
 */
export function boundaryFileLimitProblem(text: string): BoundaryProblem | null {
  const { features, positions, depth } = boundaryFileLimits;
  const json = text[0] === '{' || text[0] === '[';
  if (json ? jsonDepth(text, depth) > depth : xmlDepth(text, depth) > depth) {
    return tooMuch(`The file nests its shapes more than ${depth} levels deep; no parcel boundary needs that. Export the parcel's area as a plain Polygon or MultiPolygon.`);
  }
  const areas = json ? count(text, /"type"\s*:\s*"Feature"/g) : count(text, /<(?:[\w-]+:)?(?:Placemark|trk|rte)\b/g);
  if (areas > features) {
    return tooMuch(`The file holds ${areas} features; upload at most ${features} at a time (one parcel per file is usual).`);
  }
  const points = json
    ? count(text, /\[\s*[-+]?(?:\d|\.\d)/g)
    : count(text, /[-+]?\d+(?:\.\d+)?\s*,\s*[-+]?\d+(?:\.\d+)?/g) + count(text, /<(?:[\w-]+:)?(?:trkpt|rtept)\b/g);
  if (points > positions) {
    return tooMuch(`The file holds about ${points.toLocaleString('en')} corner points; a boundary may have at most ${positions.toLocaleString('en')}. Simplify it in your mapping program first.`);
  }
  return null;
}
