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
 * A harvest photo as `viewerId` may see it. The uploader sees the original. Anyone else who may see
 * an entry of the uploader's that carries it sees the shared (metadata-stripped) copy: the landowner
 * of the entry's parcel, and an active steward of the club whose permit the entry counts under (the
 * entries a steward sees, DESIGN.md "Who sees what"). Anyone else gets null, as if the photo did not
 * exist. Only the uploader's own entries count, so no one opens a photo by naming it on an entry.
 *
 * The subquery names its tables in plain SQL: in a single-table select Drizzle writes columns
 * unqualified, which inside the subquery would bind to the subquery's own tables.
 */
export async function findPhotoForViewer(db: Executor, { uploadId, viewerId }: { uploadId: string; viewerId: string }) {
  const onAnEntryTheViewerSees = sql`exists (
    select 1 from harvest_entries he
    join parcels p on p.id = he.parcel_id
    left join permits pm on pm.id = he.permit_id
    where he.photo_upload_id = uploads.id and he.forager_id = uploads.owner_id
      and (p.owner_id = ${viewerId}
        or exists (
          select 1 from club_memberships cm
          where cm.club_id = pm.holder_club_id and cm.user_id = ${viewerId} and cm.role = 'steward' and cm.state = 'active'))
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
        sql`(${uploads.ownerId} = ${viewerId} or ${onAnEntryTheViewerSees})`,
      ),
    );
  return rows[0] ?? null;
}
