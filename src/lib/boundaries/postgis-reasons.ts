import { formatPosition } from './geodesy';
import type { BoundaryProblem } from './types';

/**
 * PostGIS's ST_IsValidReason texts (GEOS IsValidOp, e.g. "Self-intersection[-72.855 43.945]") turned
 * into problems a landowner can act on. The reason text is kept in parentheses for support.
 */
const reasons: { pattern: RegExp; code: string; advice: (near: string) => string }[] = [
  { pattern: /^Ring Self-intersection/i, code: 'self-intersection', advice: (near) => `Ring touches itself${near}; redraw that corner so the line passes it only once` },
  { pattern: /^Self-intersection/i, code: 'self-intersection', advice: (near) => `Ring crosses itself${near}; redraw that corner` },
  { pattern: /^Hole lies outside shell/i, code: 'hole-outside', advice: (near) => `A hole lies outside the outer edge${near}; delete it or move it inside` },
  { pattern: /^(Nested holes|Holes are nested)/i, code: 'holes-overlap', advice: (near) => `One hole lies inside another${near}; delete one of them` },
  { pattern: /^Nested shells/i, code: 'parts-overlap', advice: (near) => `One part lies inside another${near}; delete the inner one or cut it out as a hole` },
  { pattern: /^Interior is disconnected/i, code: 'interior-disconnected', advice: (near) => `A hole cuts the land into separate pieces${near}; move the hole off the edge or draw the pieces as separate parts` },
  { pattern: /^Too few points/i, code: 'too-few-positions', advice: (near) => `A ring has too few corners${near}; an area needs at least three` },
  { pattern: /closed linestring/i, code: 'unclosed-ring', advice: () => 'A ring is not closed; repeat its first position at the end' },
  { pattern: /^Invalid Coordinate/i, code: 'bad-coordinates', advice: (near) => `A position is not a pair of numbers${near}; fix or remove it` },
];

export function problemFromPostgis(reason: string, location: [number, number] | null): BoundaryProblem {
  const near = location ? ` near ${formatPosition(location)}` : '';
  const known = reasons.find(({ pattern }) => pattern.test(reason));
  const message = known
    ? `${known.advice(near)} (PostGIS: ${reason}).`
    : `The database cannot accept this boundary${near} (PostGIS: ${reason}). Redraw it, or export it again from your mapping program.`;
  return { code: known?.code ?? 'invalid-geometry', message, ...(location ? { at: location } : {}) };
}
