/**
 * How deeply a JSON text nests its arrays and objects, found by scanning the characters (strings
 * skipped) without parsing: a text that nests deeper than a boundary or a request ever needs is
 * refused before JSON.parse and the code that walks the result, whose recursion deep nesting would
 * overflow. Stops counting once `stopAbove` is passed. Pure, for the browser and the server.
 */
export function jsonDepth(text: string, stopAbove = Infinity): number {
  let depth = 0;
  let deepest = 0;
  let inString = false;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (inString) {
      if (c === 0x5c) i++; // a backslash escapes the next character
      else if (c === 0x22) inString = false;
    } else if (c === 0x22) {
      inString = true;
    } else if (c === 0x5b || c === 0x7b) {
      depth++;
      if (depth > deepest) {
        deepest = depth;
        if (deepest > stopAbove) return deepest;
      }
    } else if (c === 0x5d || c === 0x7d) {
      depth--;
    }
  }
  return deepest;
}

/** Deeper than any request or boundary file the app reads (a GeoJSON MultiPolygon in a FeatureCollection nests 8). */
export const maxJsonDepth = 64;
