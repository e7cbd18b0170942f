import type { Position } from 'geojson';
import { latToTileY, lonToTileX, tileSize } from '../../lib/tiles';
import { partsOf, type Area } from './geometry';

/**
 * Where an area's name goes on the map, and which names fit at a zoom. Pure, free of Leaflet.
 * Positions are [lon, lat] (RFC 7946 §3.1.1).
 */

type Point = [number, number];

/** Planar coordinates around a latitude: longitude shrunk by cos(lat), so distances compare fairly. */
const scaleFor = (lat: number) => Math.cos((lat * Math.PI) / 180);

function ringArea(ring: readonly Position[], kx: number): number {
  let sum = 0;
  for (let i = 0, j = ring.length - 1; i < ring.length; j = i, i += 1) {
    const [x1 = 0, y1 = 0] = ring[j] ?? [];
    const [x2 = 0, y2 = 0] = ring[i] ?? [];
    sum += x1 * kx * y2 - x2 * kx * y1;
  }
  return Math.abs(sum) / 2;
}

/** A part's area in scaled square degrees: its outer ring less its holes. */
function partArea(part: readonly (readonly Position[])[], kx: number): number {
  const [outer, ...holes] = part;
  return outer ? ringArea(outer, kx) - holes.reduce((sum, hole) => sum + ringArea(hole, kx), 0) : 0;
}

function distanceToSegment([px, py]: Point, [ax, ay]: Point, [bx, by]: Point): number {
  const dx = bx - ax;
  const dy = by - ay;
  const length2 = dx * dx + dy * dy;
  const t = length2 === 0 ? 0 : Math.max(0, Math.min(1, ((px - ax) * dx + (py - ay) * dy) / length2));
  return Math.hypot(px - (ax + t * dx), py - (ay + t * dy));
}

/** The distance from a point to the nearest edge of a part, holes included. */
function clearance(point: Point, rings: readonly Point[][]): number {
  let best = Infinity;
  for (const ring of rings) {
    for (let i = 1; i < ring.length; i += 1) best = Math.min(best, distanceToSegment(point, ring[i - 1]!, ring[i]!));
  }
  return best;
}

/** Where a horizontal line at `y` is inside the part: pairs of crossings, by the even–odd rule (holes are outside). */
function insideSpans(y: number, rings: readonly Point[][]): [number, number][] {
  const crossings: number[] = [];
  for (const ring of rings) {
    for (let i = 1; i < ring.length; i += 1) {
      const [ax, ay] = ring[i - 1]!;
      const [bx, by] = ring[i]!;
      if (ay > y !== by > y) crossings.push(ax + ((y - ay) / (by - ay)) * (bx - ax));
    }
  }
  crossings.sort((a, b) => a - b);
  const spans: [number, number][] = [];
  for (let i = 0; i + 1 < crossings.length; i += 2) spans.push([crossings[i]!, crossings[i + 1]!]);
  return spans;
}

/** Even–odd point in ring (a ray cast to the east). */
function insidePlane([x, y]: Point, ring: readonly Point[]): boolean {
  let inside = false;
  for (let i = 0, j = ring.length - 1; i < ring.length; j = i, i += 1) {
    const [xi, yi] = ring[i]!;
    const [xj, yj] = ring[j]!;
    if (yi > y !== yj > y && x < xj + ((y - yj) / (yi - yj)) * (xi - xj)) inside = !inside;
  }
  return inside;
}

/** Horizontal lines a label point is looked for along: enough to find the roomy middle of a parcel drawn by hand. */
const scanLines = 32;

/**
 * A point well inside an area, where its name reads as belonging to it: in its largest part, never
 * in a hole, as far from the edges as a scan of horizontal lines finds (the midpoint of each inside
 * span, scored by its distance to the nearest edge). A centroid can fall outside a bent parcel or in
 * its hole; this cannot, for any part with an inside. Areas in `avoid` that lie inside the part (its
 * no-harvest zones) are kept clear of like holes.
 */
export function labelPointOf(area: Area, avoid: readonly Area[] = []): [number, number] {
  const parts = partsOf(area);
  const firstLat = parts[0]?.[0]?.[0]?.[1] ?? 0;
  const kx = scaleFor(firstLat);
  const largest = parts.reduce<Position[][] | undefined>((best, part) => (!best || partArea(part, kx) > partArea(best, kx) ? part : best), undefined);
  const fallback = (largest?.[0]?.[0] ?? [0, 0]) as Position;
  if (!largest) return [fallback[0] ?? 0, fallback[1] ?? 0];

  const toPlane = (ring: Position[]) => ring.map(([lon = 0, lat = 0]) => [lon * kx, lat] as Point);
  const rings = largest.map(toPlane);
  const outer = rings[0] ?? [];
  // Only outer rings wholly inside this part's outer ring, so the even–odd count stays right.
  for (const other of avoid.flatMap(partsOf)) {
    const ring = other[0] ? toPlane(other[0]) : [];
    if (ring.length >= 4 && ring.every((p) => insidePlane(p, outer))) rings.push(ring);
  }
  let south = Infinity;
  let north = -Infinity;
  for (const [, y] of rings[0] ?? []) {
    south = Math.min(south, y);
    north = Math.max(north, y);
  }
  let best: { point: Point; score: number } | null = null;
  for (let k = 1; k <= scanLines; k += 1) {
    const y = south + ((north - south) * k) / (scanLines + 1);
    for (const [west, east] of insideSpans(y, rings)) {
      const point: Point = [(west + east) / 2, y];
      const score = clearance(point, rings);
      if (!best || score > best.score) best = { point, score };
    }
  }
  if (!best) return [fallback[0] ?? 0, fallback[1] ?? 0];
  return [best.point[0] / kx, best.point[1]];
}

/** An area that may carry its name on the map. */
export type LabelCandidate = {
  id: string;
  text: string;
  /** From `labelPointOf`. */
  at: [number, number];
  /** [[west, south], [east, north]] of the area. */
  bounds: [[number, number], [number, number]];
};

/** Width of a run of 12 px semibold text, about 0.6 em a letter, plus padding; a line is 16 px tall. */
const textWidth = (chars: number) => Math.ceil(chars * 7.2) + 8;
const lineHeight = 16;

/**
 * The size of a name on screen, in px, on one line or broken at the space nearest its middle
 * into two (a name of one word stays on one line).
 */
export function labelSize(text: string, lines: 1 | 2 = 1): { width: number; height: number } {
  if (lines === 1 || !text.includes(' ')) return { width: textWidth(text.length), height: lineHeight + 2 };
  let best = text.length;
  for (let i = text.indexOf(' '); i >= 0; i = text.indexOf(' ', i + 1)) best = Math.min(best, Math.max(i, text.length - i - 1));
  return { width: textWidth(best), height: lineHeight * 2 + 2 };
}

/** Pixel position of a [lon, lat] at a zoom, in the world's Web Mercator pixel grid. */
const toPixel = ([lon, lat]: [number, number], zoom: number): Point => [lonToTileX(lon, zoom) * tileSize, latToTileY(lat, zoom) * tileSize];

export type PlacedLabel<T extends LabelCandidate = LabelCandidate> = T & { lines: 1 | 2; width: number };

/** A box in the world's pixel grid at a zoom, as Leaflet's `map.getPixelBounds()` gives the view. */
export type PixelBox = { left: number; top: number; right: number; bottom: number };

/**
 * The names to show at a zoom, each on one line or, when one line is too wide, two. A name shows
 * only where its area is at least as wide as the name and twice as tall on screen (so at low zoom
 * small parcels go unnamed rather than cluttered), never over a name already placed (larger areas
 * are placed first), and, given the view, only wholly inside it rather than cut off at its edge.
 */
export function chooseLabels<T extends LabelCandidate>(candidates: readonly T[], zoom: number, view?: PixelBox): PlacedLabel<T>[] {
  const sized = candidates.map((candidate) => {
    const [[west, south], [east, north]] = candidate.bounds;
    const [x1, y1] = toPixel([west, north], zoom);
    const [x2, y2] = toPixel([east, south], zoom);
    return { candidate, width: x2 - x1, height: y2 - y1 };
  });
  sized.sort((a, b) => b.width * b.height - a.width * a.height);

  const placed: PixelBox[] = [];
  const chosen: PlacedLabel<T>[] = [];
  for (const { candidate, width, height } of sized) {
    const [x, y] = toPixel(candidate.at, zoom);
    for (const lines of [1, 2] as const) {
      const size = labelSize(candidate.text, lines);
      if (width < size.width || height < size.height * 2) continue;
      const box = { left: x - size.width / 2, right: x + size.width / 2, top: y - size.height / 2, bottom: y + size.height / 2 };
      const overlaps = placed.some((other) => box.left < other.right && other.left < box.right && box.top < other.bottom && other.top < box.bottom);
      const outside = view && (box.left < view.left || box.right > view.right || box.top < view.top || box.bottom > view.bottom);
      if (overlaps || outside) continue;
      placed.push(box);
      chosen.push({ ...candidate, lines, width: size.width });
      break;
    }
  }
  return chosen;
}

/**
 * The part of an area inside a box [[west, south], [east, north]], or null when none is: each ring
 * clipped to the box edge by edge (Sutherland–Hodgman, which is exact for a convex window such as
 * a box). Used to name a parcel whose usual label point is out of view, where it is seen.
 */
export function clipToBox(area: Area, [[west, south], [east, north]]: [[number, number], [number, number]]): Area | null {
  const edges: { inside: (p: Position) => boolean; cut: (a: Position, b: Position) => Position }[] = [
    { inside: (p) => p[0]! >= west, cut: (a, b) => [west, a[1]! + ((west - a[0]!) * (b[1]! - a[1]!)) / (b[0]! - a[0]!)] },
    { inside: (p) => p[0]! <= east, cut: (a, b) => [east, a[1]! + ((east - a[0]!) * (b[1]! - a[1]!)) / (b[0]! - a[0]!)] },
    { inside: (p) => p[1]! >= south, cut: (a, b) => [a[0]! + ((south - a[1]!) * (b[0]! - a[0]!)) / (b[1]! - a[1]!), south] },
    { inside: (p) => p[1]! <= north, cut: (a, b) => [a[0]! + ((north - a[1]!) * (b[0]! - a[0]!)) / (b[1]! - a[1]!), north] },
  ];
  const clipRing = (ring: readonly Position[]): Position[] => {
    let points = ring.slice(0, -1);
    for (const { inside, cut } of edges) {
      const next: Position[] = [];
      for (let i = 0; i < points.length; i += 1) {
        const current = points[i]!;
        const previous = points[(i + points.length - 1) % points.length]!;
        if (inside(current)) {
          if (!inside(previous)) next.push(cut(previous, current));
          next.push(current);
        } else if (inside(previous)) next.push(cut(previous, current));
      }
      points = next;
    }
    return points.length >= 3 ? [...points, points[0]!] : [];
  };
  const parts: Position[][][] = [];
  for (const [outer, ...holes] of partsOf(area)) {
    const clipped = outer ? clipRing(outer) : [];
    if (clipped.length > 0) parts.push([clipped, ...holes.map(clipRing).filter((ring) => ring.length > 0)]);
  }
  return parts.length > 0 ? { type: 'MultiPolygon', coordinates: parts } : null;
}
