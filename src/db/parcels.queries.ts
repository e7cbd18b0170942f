import { and, asc, eq, isNull, sql } from 'drizzle-orm';
import type { BoundaryGeometry, ParcelSettings } from '../lib/land.schemas';
import type { Executor } from './client';
import { allowances, parcels, species } from './schema';

/**
 * Correlated subqueries name their tables in plain SQL: in a single-table select Drizzle writes
 * columns unqualified, which inside a subquery would bind to the subquery's own table.
 */
const activePermits = sql<number>`(select count(*)::int from permits p where p.parcel_id = parcels.id and p.state = 'active')`;
const boundaryJson = sql<BoundaryGeometry>`ST_AsGeoJSON(${parcels.boundary}, 7)::json`;
const geodesicArea = (boundary: BoundaryGeometry) =>
  sql<number>`ST_Area(ST_Multi(ST_SetSRID(ST_GeomFromGeoJSON(${JSON.stringify(boundary)}), 4326))::geography)`;

/** A landowner's parcels by name, with boundaries (for the map) and active permit counts. */
export async function listParcelsForOwner(db: Executor, { ownerId }: { ownerId: string }) {
  return db
    .select({
      id: parcels.id,
      name: parcels.name,
      status: parcels.status,
      areaM2: parcels.areaM2,
      timeZone: parcels.timeZone,
      openToRequests: parcels.openToRequests,
      activePermits,
      boundary: boundaryJson,
    })
    .from(parcels)
    .where(eq(parcels.ownerId, ownerId))
    .orderBy(asc(parcels.name));
}

/** One parcel with its boundary as GeoJSON, only when `ownerId` owns it. */
export async function findParcelForOwner(db: Executor, { parcelId, ownerId }: { parcelId: string; ownerId: string }) {
  const rows = await db
    .select({
      id: parcels.id,
      ownerId: parcels.ownerId,
      name: parcels.name,
      description: parcels.description,
      status: parcels.status,
      areaM2: parcels.areaM2,
      timeZone: parcels.timeZone,
      nearingThresholdPercent: parcels.nearingThresholdPercent,
      openToRequests: parcels.openToRequests,
      boundary: boundaryJson,
      activePermits,
    })
    .from(parcels)
    .where(and(eq(parcels.id, parcelId), eq(parcels.ownerId, ownerId)));
  return rows[0] ?? null;
}

/**
 * A new parcel. A verified landowner's parcel is listed at once; an unverified one's stays a draft.
 * The area is PostGIS's geodesic area of the boundary as stored.
 */
export async function createParcel(db: Executor, { ownerId, listed, input }: { ownerId: string; listed: boolean; input: ParcelSettings & { boundary: BoundaryGeometry } }) {
  const [row] = await db
    .insert(parcels)
    .values({ ...input, ownerId, status: listed ? 'listed' : 'draft', openToRequests: listed && input.openToRequests, areaM2: geodesicArea(input.boundary) })
    .returning({ id: parcels.id, name: parcels.name, status: parcels.status, areaM2: parcels.areaM2 });
  if (!row) throw new Error('the parcel was not saved');
  return row;
}

export async function updateParcel(
  db: Executor,
  { parcelId, ownerId, listed, patch }: { parcelId: string; ownerId: string; listed: boolean; patch: Partial<ParcelSettings> & { boundary?: BoundaryGeometry; status?: 'draft' | 'listed' | 'archived' } },
) {
  const { boundary, ...settings } = patch;
  const [row] = await db
    .update(parcels)
    .set({
      ...settings,
      ...(settings.openToRequests !== undefined ? { openToRequests: listed && settings.openToRequests } : {}),
      ...(boundary ? { boundary, areaM2: geodesicArea(boundary) } : {}),
    })
    .where(and(eq(parcels.id, parcelId), eq(parcels.ownerId, ownerId)))
    .returning({ id: parcels.id, name: parcels.name, areaM2: parcels.areaM2 });
  return row ?? null;
}

/** Parcels any forager may ask to use: listed and open to requests. Never anyone's activity. */
export async function listOpenParcels(db: Executor) {
  const rows = await db
    .select({
      id: parcels.id,
      name: parcels.name,
      description: parcels.description,
      areaM2: parcels.areaM2,
      timeZone: parcels.timeZone,
      /** A rough location only: the centre, to two decimals (about a kilometre). */
      centre: sql<[number, number]>`array[round(ST_X(ST_Centroid(${parcels.boundary}))::numeric, 2)::float, round(ST_Y(ST_Centroid(${parcels.boundary}))::numeric, 2)::float]`,
      speciesName: species.commonName,
      seasons: allowances.seasons,
    })
    .from(parcels)
    .leftJoin(allowances, and(eq(allowances.parcelId, parcels.id), isNull(allowances.removedAt)))
    .leftJoin(species, eq(species.id, allowances.speciesId))
    .where(and(eq(parcels.status, 'listed'), eq(parcels.openToRequests, true)))
    .orderBy(asc(parcels.name), asc(species.commonName));
  const byParcel = new Map<string, { id: string; name: string; description: string; areaM2: number; timeZone: string; centre: [number, number]; species: { name: string; seasons: { start: string; end: string }[] }[] }>();
  for (const row of rows) {
    const parcel = byParcel.get(row.id) ?? { id: row.id, name: row.name, description: row.description, areaM2: row.areaM2, timeZone: row.timeZone, centre: row.centre, species: [] };
    if (row.speciesName && row.seasons) parcel.species.push({ name: row.speciesName, seasons: row.seasons });
    byParcel.set(row.id, parcel);
  }
  return [...byParcel.values()];
}

export async function findOpenParcel(db: Executor, { parcelId }: { parcelId: string }) {
  const [row] = await db
    .select({ id: parcels.id, name: parcels.name, ownerId: parcels.ownerId, timeZone: parcels.timeZone })
    .from(parcels)
    .where(and(eq(parcels.id, parcelId), eq(parcels.status, 'listed'), eq(parcels.openToRequests, true)));
  return row ?? null;
}

/** Per parcel of the owner: its allowances' season windows and its closures (for "in season" lines). */
export async function listSeasonFacts(db: Executor, { ownerId }: { ownerId: string }) {
  const rows = await db
    .select({
      parcelId: parcels.id,
      seasons: sql<{ start: string; end: string }[][]>`coalesce((select json_agg(a.seasons) from allowances a where a.parcel_id = parcels.id and a.removed_at is null), '[]'::json)`,
      closures: sql<{ startsOn: string; endsOn: string; reason: string }[]>`coalesce((select json_agg(json_build_object('startsOn', c.starts_on, 'endsOn', c.ends_on, 'reason', c.reason)) from closures c where c.parcel_id = parcels.id), '[]'::json)`,
    })
    .from(parcels)
    .where(eq(parcels.ownerId, ownerId));
  return new Map(rows.map((r) => [r.parcelId, r]));
}
