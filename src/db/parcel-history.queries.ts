import { and, desc, eq, sql } from 'drizzle-orm';
import type { Executor } from './client';
import { auditEvents, parcels, users } from './schema';

/**
 * A parcel's history: each change a landowner makes to what may be taken and when (allowances,
 * closures, zones, hazards, terms, listing), kept in the append-only audit trail with the sentence
 * it read as when it was made. Every query names the owner.
 */
export type ParcelChange =
  | 'allowance.added' | 'allowance.changed' | 'allowance.removed'
  | 'closure.added' | 'closure.removed' | 'zone.added' | 'zone.removed' | 'hazard.added' | 'hazard.removed'
  | 'terms.published' | 'parcel.settings' | 'parcel.boundary';

export async function recordParcelChange(
  db: Executor,
  { parcelId, actorId, action, summary, detail = {}, now }: { parcelId: string; actorId: string; action: ParcelChange; summary: string; detail?: Record<string, unknown>; now: Date },
) {
  await db.insert(auditEvents).values({ actorId, action, subjectType: 'parcel', subjectId: parcelId, detail: { ...detail, summary }, at: now });
}

/** The newest changes first, with who made them; another owner's parcel answers nothing. */
export async function listParcelHistory(db: Executor, { parcelId, ownerId, limit = 50 }: { parcelId: string; ownerId: string; limit?: number }) {
  const rows = await db
    .select({ id: auditEvents.id, action: auditEvents.action, detail: auditEvents.detail, at: auditEvents.at, actorName: users.name })
    .from(auditEvents)
    .leftJoin(users, eq(users.id, auditEvents.actorId))
    .where(and(
      eq(auditEvents.subjectType, 'parcel'),
      eq(auditEvents.subjectId, parcelId),
      sql`exists (select 1 from ${parcels} where ${parcels.id}::text = ${parcelId} and ${parcels.ownerId} = ${ownerId})`,
    ))
    .orderBy(desc(auditEvents.at), desc(auditEvents.id))
    .limit(limit);
  return rows.map((r) => ({ id: r.id, action: r.action, at: r.at, actorName: r.actorName, summary: String((r.detail as { summary?: unknown }).summary ?? r.action) }));
}
