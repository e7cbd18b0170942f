import { and, asc, eq, sql } from 'drizzle-orm';
import type { Executor } from './client';
import { parcels, permits } from './schema';

const activePermits = sql<number>`(select count(*)::int from ${permits} where ${permits.parcelId} = ${parcels.id} and ${permits.state} = 'active')`;

/** A landowner's parcels, newest first, with their active permit counts. */
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
      boundary: sql<unknown>`ST_AsGeoJSON(${parcels.boundary}, 7)::json`,
      activePermits,
    })
    .from(parcels)
    .where(and(eq(parcels.id, parcelId), eq(parcels.ownerId, ownerId)));
  return rows[0] ?? null;
}
