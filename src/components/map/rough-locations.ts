import type { LonLatBounds } from './geometry';

/**
 * Where open parcels are, at the precision of a rough location (GLOSSARY: never the boundary).
 * listOpenParcels (src/db/parcels.queries.ts) rounds each parcel's centre to two decimals, so the
 * true centre lies within half a hundredth of a degree of it: the map draws that square, a cell of a
 * 0.01° grid, and puts a marker in its middle. Pure and free of Leaflet, for tests.
 */
export const roughLocationStepDegrees = 0.01;

export type RoughParcel = { id: string; name: string; centre: [number, number] /* [lon, lat], rounded */; areaM2: number };

/** The parcels whose rounded centre is the same point, and the cell around it. */
export type RoughPlace = { key: string; at: [number, number]; cell: LonLatBounds; parcels: RoughParcel[] };

/**
 * One place per rounded centre, in the order the parcels came (by name), so two parcels in one cell
 * share a marker rather than hiding one under the other.
 */
export function roughPlaces(parcels: readonly RoughParcel[]): RoughPlace[] {
  const half = roughLocationStepDegrees / 2;
  const places = new Map<string, RoughPlace>();
  for (const parcel of parcels) {
    const [lon, lat] = parcel.centre;
    const key = `${lon.toFixed(2)},${lat.toFixed(2)}`;
    const place = places.get(key) ?? { key, at: [lon, lat], cell: [[lon - half, lat - half], [lon + half, lat + half]], parcels: [] };
    place.parcels.push(parcel);
    places.set(key, place);
  }
  return [...places.values()];
}

/** The box around every cell, for fitting the map; null when there is none. */
export function placesBounds(places: readonly RoughPlace[]): LonLatBounds | null {
  if (places.length === 0) return null;
  const wests = places.map((p) => p.cell[0][0]);
  const souths = places.map((p) => p.cell[0][1]);
  const easts = places.map((p) => p.cell[1][0]);
  const norths = places.map((p) => p.cell[1][1]);
  return [[Math.min(...wests), Math.min(...souths)], [Math.max(...easts), Math.max(...norths)]];
}

/** "near 43.95°, -72.85°": the words the list of open parcels uses for the same point (latitude first). */
export function roughWords([lon, lat]: [number, number]): string {
  return `near ${lat.toFixed(2)}°, ${lon.toFixed(2)}°`;
}
