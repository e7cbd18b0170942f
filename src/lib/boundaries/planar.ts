import type { Position } from './types';

/**
 * Planar predicates in lon/lat degrees. GeoJSON edges are straight lines in lon/lat (RFC 7946 §3.1.1,
 * §4), and PostGIS's geometry type judges validity in the same plane, so topology is tested here too.
 */

/** Twice the signed area of (a, b, c): > 0 counter-clockwise, < 0 clockwise, 0 collinear. */
export function orient(a: Position, b: Position, c: Position): number {
  return (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0]);
}

/** Shoelace sum over a closed ring: > 0 when the ring runs counter-clockwise (RFC 7946 §3.1.6 exterior). */
export function signedRingArea(ring: readonly Position[]): number {
  let sum = 0;
  for (let i = 0; i + 1 < ring.length; i += 1) {
    const [x1, y1] = ring[i] as Position;
    const [x2, y2] = ring[i + 1] as Position;
    sum += x1 * y2 - x2 * y1;
  }
  return sum / 2;
}

export type Box = { minX: number; minY: number; maxX: number; maxY: number };

export function ringBox(ring: readonly Position[]): Box {
  const box = { minX: Infinity, minY: Infinity, maxX: -Infinity, maxY: -Infinity };
  for (const [x, y] of ring) {
    if (x < box.minX) box.minX = x;
    if (x > box.maxX) box.maxX = x;
    if (y < box.minY) box.minY = y;
    if (y > box.maxY) box.maxY = y;
  }
  return box;
}

const inBox = (box: Box, [x, y]: Position) => x >= box.minX && x <= box.maxX && y >= box.minY && y <= box.maxY;

const onSegment = (p: Position, a: Position, b: Position) =>
  orient(a, b, p) === 0 && p[0] >= Math.min(a[0], b[0]) && p[0] <= Math.max(a[0], b[0]) && p[1] >= Math.min(a[1], b[1]) && p[1] <= Math.max(a[1], b[1]);

const same = (p: Position, q: Position) => p[0] === q[0] && p[1] === q[1];

/**
 * How two segments meet: `proper` (they cross at a point inside both), `touch` (they share one point,
 * an end of at least one), `overlap` (collinear along a stretch) or `none`. `at` is a shared point.
 */
export type Meeting = { kind: 'none' } | { kind: 'proper' | 'touch' | 'overlap'; at: Position };

export function meetSegments(a1: Position, a2: Position, b1: Position, b2: Position): Meeting {
  const d1 = orient(b1, b2, a1);
  const d2 = orient(b1, b2, a2);
  const d3 = orient(a1, a2, b1);
  const d4 = orient(a1, a2, b2);
  if (((d1 > 0 && d2 < 0) || (d1 < 0 && d2 > 0)) && ((d3 > 0 && d4 < 0) || (d3 < 0 && d4 > 0))) {
    const t = d1 / (d1 - d2);
    return { kind: 'proper', at: [a1[0] + t * (a2[0] - a1[0]), a1[1] + t * (a2[1] - a1[1])] };
  }
  if (d1 === 0 && d2 === 0 && d3 === 0 && d4 === 0) {
    // Collinear: the shared points are the ends of one that lie on the other.
    const shared = [a1, a2].filter((p) => onSegment(p, b1, b2)).concat([b1, b2].filter((p) => onSegment(p, a1, a2)));
    const first = shared[0];
    if (!first) return { kind: 'none' };
    return shared.some((p) => !same(p, first)) ? { kind: 'overlap', at: first } : { kind: 'touch', at: first };
  }
  for (const [p, s, e] of [[a1, b1, b2], [a2, b1, b2], [b1, a1, a2], [b2, a1, a2]] as const) {
    if (onSegment(p, s, e)) return { kind: 'touch', at: p };
  }
  return { kind: 'none' };
}

/**
 * Where a point lies against one closed ring: the crossing-number test (Shimrat 1962, CACM Algorithm 112),
 * with points on an edge reported as `boundary`. Bounding-box rejection first.
 */
export function locateInRing(point: Position, ring: readonly Position[], box: Box = ringBox(ring)): 'inside' | 'outside' | 'boundary' {
  if (!inBox(box, point)) return 'outside';
  const [x, y] = point;
  let inside = false;
  for (let i = 0; i + 1 < ring.length; i += 1) {
    const a = ring[i] as Position;
    const b = ring[i + 1] as Position;
    if (onSegment(point, a, b)) return 'boundary';
    if (a[1] > y !== b[1] > y && x < ((b[0] - a[0]) * (y - a[1])) / (b[1] - a[1]) + a[0]) inside = !inside;
  }
  return inside ? 'inside' : 'outside';
}

/** Against a polygon with holes (RFC 7946 §3.1.6): a hole is not the polygon, its edge is the boundary. */
export function locateInPolygon(point: Position, rings: readonly (readonly Position[])[]): 'inside' | 'outside' | 'boundary' {
  const [exterior, ...holes] = rings;
  if (!exterior) return 'outside';
  const where = locateInRing(point, exterior);
  if (where !== 'inside') return where;
  for (const hole of holes) {
    const inHole = locateInRing(point, hole);
    if (inHole === 'boundary') return 'boundary';
    if (inHole === 'inside') return 'outside';
  }
  return 'inside';
}

/** One edge of a ring, with where it came from, for the sweep below. */
export type Edge = { a: Position; b: Position; part: number; ring: number; index: number; minX: number; maxX: number };

export function ringEdges(ring: readonly Position[], part: number, ringIndex: number): Edge[] {
  const edges: Edge[] = [];
  for (let i = 0; i + 1 < ring.length; i += 1) {
    const a = ring[i] as Position;
    const b = ring[i + 1] as Position;
    edges.push({ a, b, part, ring: ringIndex, index: i, minX: Math.min(a[0], b[0]), maxX: Math.max(a[0], b[0]) });
  }
  return edges;
}

/**
 * Every pair of edges that meet, by sort-and-sweep on x with a y-range rejection before the exact test:
 * O(n log n + pairs whose boxes overlap), far below the O(n²) of testing every pair. `visit` returns
 * false to stop early.
 */
export function sweepMeetings(edges: Edge[], visit: (e: Edge, f: Edge, meeting: Exclude<Meeting, { kind: 'none' }>) => boolean | void): void {
  const sorted = [...edges].sort((e, f) => e.minX - f.minX);
  for (let i = 0; i < sorted.length; i += 1) {
    const e = sorted[i] as Edge;
    const eMinY = Math.min(e.a[1], e.b[1]);
    const eMaxY = Math.max(e.a[1], e.b[1]);
    for (let j = i + 1; j < sorted.length; j += 1) {
      const f = sorted[j] as Edge;
      if (f.minX > e.maxX) break;
      if (Math.max(f.a[1], f.b[1]) < eMinY || Math.min(f.a[1], f.b[1]) > eMaxY) continue;
      const meeting = meetSegments(e.a, e.b, f.a, f.b);
      if (meeting.kind !== 'none' && visit(e, f, meeting) === false) return;
    }
  }
}
