import { and, eq, sql } from 'drizzle-orm';
import type { Executor } from './client';
import { uploads } from './schema';

/** Records a stored harvest photo (the original's key; the shared copy's key is derived from it). */
export async function insertPhotoUpload(
  db: Executor,
  { gps, ...input }: { ownerId: string; storageKey: string; contentType: string; byteSize: number; sha256: string; gps?: { longitude: number; latitude: number } | null },
) {
  const [row] = await db
    .insert(uploads)
    .values({ ...input, purpose: 'harvest-photo', gpsPosition: gps ? { type: 'Point', coordinates: [gps.longitude, gps.latitude] } : null })
    .returning({ id: uploads.id });
  if (!row) throw new Error('the photo upload was not recorded');
  return row;
}

/**
 * A harvest photo as `viewerId` may see it: the uploader sees the original; the landowner of a
 * parcel on which a harvest entry references the photo sees the shared (metadata-stripped) copy;
 * anyone else gets null, as if the photo did not exist.
 *
 * The subquery names its tables in plain SQL: in a single-table select Drizzle writes columns
 * unqualified, which inside the subquery would bind to the subquery's own tables.
 */
export async function findPhotoForViewer(db: Executor, { uploadId, viewerId }: { uploadId: string; viewerId: string }) {
  const onViewersLand = sql`exists (
    select 1 from harvest_entries he
    join parcels p on p.id = he.parcel_id
    where he.photo_upload_id = uploads.id and p.owner_id = ${viewerId}
  )`;
  const rows = await db
    .select({
      id: uploads.id,
      storageKey: uploads.storageKey,
      contentType: uploads.contentType,
      access: sql<'original' | 'shared'>`case when ${uploads.ownerId} = ${viewerId} then 'original' else 'shared' end`,
    })
    .from(uploads)
    .where(
      and(
        eq(uploads.id, uploadId),
        eq(uploads.purpose, 'harvest-photo'),
        sql`(${uploads.ownerId} = ${viewerId} or ${onViewersLand})`,
      ),
    );
  return rows[0] ?? null;
}
