import { between, integerBetween, seededRandom } from './stats';

/**
 * Synthetic parcels for the benchmark: irregular star-shaped rings of 12–60 vertices, 5–200 ha
 * (log-uniform), about 10 % with a hole and 5 % MultiPolygons, over a box of Vermont's size and
 * latitude (−73.3…−71.5 °E, 42.8…44.4 °N: about 146 km × 178 km ≈ 26 000 km²; Vermont is about
 * 24 900 km², from memory). Parcel i is the same on every run, so a re-run can sample points in a
 * parcel without reading it back. Parcels may overlap: 100 000 parcels of this size cover the box
 * about twice over, a heavier case than real, mostly disjoint land.
 */
export const region = { west: -73.3, east: -71.5, south: 42.8, north: 44.4 } as const;

/**
 * Past 100 000 parcels (`npm run bench -- --scale` seeds 1 000 000) the land grows, not the density:
 * parcels 100 000 k … 100 000 (k + 1) − 1 lie in tile k, a copy of the region moved east by k mod 5
 * and south by ⌊k / 5⌋ region widths and heights, so a lookup meets as many candidates at any size.
 */
export const parcelsPerTile = 100_000;
export const tileColumns = 5;
export const tileOffset = (tile: number): Position => [(tile % tileColumns) * (region.east - region.west), -Math.floor(tile / tileColumns) * (region.north - region.south)];

/** Metres per degree near 44° N; good enough to shape synthetic parcels (PostGIS computes the real area). */
const metresPerDegreeLat = 111_132;
const metresPerDegreeLon = (lat: number) => 111_320 * Math.cos((lat * Math.PI) / 180);

type Position = [number, number];
type Ring = Position[];

export type SyntheticParcel = {
  index: number;
  name: string;
  /** RFC 7946 MultiPolygon coordinates: exteriors counter-clockwise, holes clockwise (§3.1.6). */
  coordinates: Ring[][];
  center: Position;
  /** Distance from the centre to the nearest edge of the first part, in metres. */
  innerRadiusM: number;
  holeRadiusM: number | null;
  vertices: number;
};

export const parcelName = (index: number) => `Bench parcel ${index}`;

/** A star-shaped ring around `center` of about `areaM2`, in planar metres first, then lon/lat. */
function starRing(random: () => number, center: Position, areaM2: number, vertices: number) {
  const step = (2 * Math.PI) / vertices;
  const angles = Array.from({ length: vertices }, (_, k) => (k + (random() - 0.5) * 0.5) * step);
  const radii = angles.map(() => between(random, 0.6, 1));
  let unitArea = 0;
  for (let k = 0; k < vertices; k += 1) {
    const j = (k + 1) % vertices;
    const dTheta = ((angles[j] ?? 0) - (angles[k] ?? 0) + 2 * Math.PI) % (2 * Math.PI);
    unitArea += 0.5 * (radii[k] ?? 0) * (radii[j] ?? 0) * Math.sin(dTheta);
  }
  const scale = Math.sqrt(areaM2 / unitArea);
  const xy = angles.map((a, k) => [scale * (radii[k] ?? 0) * Math.cos(a), scale * (radii[k] ?? 0) * Math.sin(a)] as Position);
  let innerRadiusM = Infinity;
  for (let k = 0; k < vertices; k += 1) innerRadiusM = Math.min(innerRadiusM, distanceToSegment(xy[k] as Position, xy[(k + 1) % vertices] as Position));
  const ring = xy.map(([x, y]) => toLonLat(center, x, y));
  ring.push(ring[0] as Position);
  return { ring, innerRadiusM, outerRadiusM: scale };
}

function distanceToSegment([ax, ay]: Position, [bx, by]: Position): number {
  const dx = bx - ax;
  const dy = by - ay;
  const t = Math.max(0, Math.min(1, -(ax * dx + ay * dy) / (dx * dx + dy * dy)));
  return Math.hypot(ax + t * dx, ay + t * dy);
}

function toLonLat([lon, lat]: Position, x: number, y: number): Position {
  return [round7(lon + x / metresPerDegreeLon(lat)), round7(lat + y / metresPerDegreeLat)];
}

const round7 = (value: number) => Math.round(value * 1e7) / 1e7;

/** A clockwise octagon: a hole of `radiusM` around `center`. */
function holeRing(center: Position, radiusM: number): Ring {
  const ring = Array.from({ length: 8 }, (_, k) => {
    const a = (-k * 2 * Math.PI) / 8;
    return toLonLat(center, radiusM * Math.cos(a), radiusM * Math.sin(a));
  });
  ring.push(ring[0] as Position);
  return ring;
}

export function syntheticParcel(index: number): SyntheticParcel {
  const random = seededRandom(0x7a11 + index * 7919);
  const [dx, dy] = tileOffset(Math.floor(index / parcelsPerTile));
  const center: Position = [between(random, region.west, region.east) + dx, between(random, region.south, region.north) + dy];
  const areaM2 = 10_000 * 5 * Math.pow(40, random()); // 5–200 ha, log-uniform
  const multi = random() < 0.05;
  const holed = random() < 0.1;
  const mainVertices = integerBetween(random, 12, 60);
  const main = starRing(random, center, multi ? areaM2 * 0.7 : areaM2, mainVertices);
  const holeRadiusM = holed ? main.innerRadiusM * 0.3 : null;
  const first: Ring[] = holeRadiusM ? [main.ring, holeRing(center, holeRadiusM)] : [main.ring];
  const coordinates: Ring[][] = [first];
  let vertices = mainVertices + (holeRadiusM ? 8 : 0);
  if (multi) {
    const secondArea = areaM2 * 0.3;
    const secondVertices = integerBetween(random, 12, 60);
    const gap = (main.outerRadiusM + Math.sqrt(secondArea / 1.1)) * 1.4;
    const direction = between(random, 0, 2 * Math.PI);
    const secondCenter = toLonLat(center, gap * Math.cos(direction), gap * Math.sin(direction));
    coordinates.push([starRing(random, secondCenter, secondArea, secondVertices).ring]);
    vertices += secondVertices;
  }
  return { index, name: parcelName(index), coordinates, center, innerRadiusM: main.innerRadiusM, holeRadiusM, vertices };
}

export type BenchPosition = { longitude: number; latitude: number; accuracyM: number; kind: 'in-parcel' | 'random' };

/**
 * Positions to look up: 70 % well inside a random parcel (clear of its edge and any hole by a margin
 * of at least about a third of its inner radius), 30 % anywhere in the region. Accuracy radii
 * 3–15 m: phones under open sky to under canopy (REFERENCES §5).
 */
export function benchPositions(seed: number, count: number, parcelCount: number): BenchPosition[] {
  const random = seededRandom(seed);
  return Array.from({ length: count }, () => {
    const accuracyM = Math.round(between(random, 3, 15) * 10) / 10;
    if (random() < 0.3) {
      const tiles = Math.ceil(parcelCount / parcelsPerTile);
      const [dx, dy] = tiles > 1 ? tileOffset(Math.floor(random() * tiles)) : [0, 0];
      return { longitude: between(random, region.west, region.east) + dx, latitude: between(random, region.south, region.north) + dy, accuracyM, kind: 'random' };
    }
    const parcel = syntheticParcel(Math.floor(random() * parcelCount));
    const r = parcel.innerRadiusM;
    const distance = parcel.holeRadiusM ? between(random, 0.5 * r, 0.65 * r) : between(random, 0, 0.6 * r);
    const angle = between(random, 0, 2 * Math.PI);
    const [longitude, latitude] = toLonLat(parcel.center, distance * Math.cos(angle), distance * Math.sin(angle));
    return { longitude, latitude, accuracyM, kind: 'in-parcel' };
  });
}

/** The region's area in km², on the same local scale as the parcels. */
export function regionAreaKm2(): number {
  const midLat = (region.south + region.north) / 2;
  return ((region.east - region.west) * metresPerDegreeLon(midLat) * (region.north - region.south) * metresPerDegreeLat) / 1e6;
}
