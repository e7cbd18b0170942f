import { and, eq, sql } from 'drizzle-orm';
import type { Forager, LonLat, PermitFacts, Verdict } from '../lib/field/types';
import type { Executor, Tx } from './client';
import { visitEnds } from './field.commands';
import { checkIns, flags, visits } from './schema';

type PermitState = PermitFacts['state'];

/**
 * Writes of items a device recorded offline and sends later (src/server/field/sync.ts decides):
 * check-ins with the device's instant and key, and the visit an item belongs to.
 */

/** The check-in the forager first sent a key with, if any. Keys are the forager's own. */
export async function findSyncedCheckIn(db: Executor, { foragerId, key }: { foragerId: string; key: string }) {
  const [row] = await db
    .select({ id: checkIns.id, requestHash: checkIns.requestHash })
    .from(checkIns)
    .where(and(eq(checkIns.foragerId, foragerId), eq(checkIns.idempotencyKey, key)));
  return row ?? null;
}

export type SyncedCheckIn = {
  forager: Forager;
  idempotencyKey: string;
  requestHash: string;
  position: LonLat;
  accuracyM: number;
  source: 'gps' | 'tap';
  verdict: Verdict;
  parcelId: string | null;
  visitId: string | null;
  /** The device's instant: when the forager was there. */
  recordedAt: Date;
  /** When the server received it. */
  now: Date;
};

/** Logs a synced check-in; null when its key is already the forager's (the same item sent at the same moment). */
export async function insertSyncedCheckIn(db: Executor, c: SyncedCheckIn): Promise<string | null> {
  const [row] = await db
    .insert(checkIns)
    .values({
      foragerId: c.forager.id,
      idempotencyKey: c.idempotencyKey,
      requestHash: c.requestHash,
      position: { type: 'Point', coordinates: c.position },
      accuracyM: c.accuracyM,
      positionSource: c.source,
      verdict: c.verdict,
      parcelId: c.parcelId,
      visitId: c.visitId,
      at: c.recordedAt,
      deviceRecordedAt: c.recordedAt,
      receivedAt: c.now,
    })
    .onConflictDoNothing({ target: [checkIns.foragerId, checkIns.idempotencyKey] })
    .returning({ id: checkIns.id });
  return row?.id ?? null;
}

type VisitAt = {
  forager: Forager;
  parcelId: string;
  /** The parcel-local day of the item. */
  localDate: string;
  permitId: string | null;
  /** The device's instant of the item. */
  at: Date;
  /** The end of that local day on the parcel's clock (endOfLocalDay). */
  dayEnds: Date;
  now: Date;
};

/**
 * The visit an item recorded offline belongs to: the forager's visit on that parcel and local day
 * that was going on at the item's instant (open, or ended at or after it), continued as it is and
 * never reopened. Failing that, a visit of its own begins at the item's instant. It is left open only
 * when it is the forager's latest and its day is not over (any older open visit ends at its instant,
 * as an online check-in elsewhere ends one); otherwise it is recorded already ended, at the next visit's
 * start or at the end of its day, whichever comes first, since a forager has at most one open visit.
 * Visits of one forager take turns, as in recordCheckIn.
 */
export async function visitForSync(tx: Tx, v: VisitAt): Promise<string> {
  const at = v.at.toISOString();
  await tx.execute(sql`select pg_advisory_xact_lock(hashtextextended(${`visits:${v.forager.id}`}, 0))`);
  const [going] = await tx.execute<{ id: string }>(sql`
    select v.id from visits v
    where v.forager_id = ${v.forager.id} and v.parcel_id = ${v.parcelId}::uuid and v.local_date = ${v.localDate}::date
      and v.started_at <= ${at}::timestamptz and (v.ended_at is null or v.ended_at >= ${at}::timestamptz)
    order by v.started_at desc limit 1`);
  if (going) return going.id;
  const [next] = await tx.execute<{ started_at: string | null }>(sql`
    select min(v.started_at)::text as started_at from visits v where v.forager_id = ${v.forager.id} and v.started_at > ${at}::timestamptz`);
  const nextStart = next?.started_at ? new Date(next.started_at) : null;
  let ended: { endedAt: Date; endedBy: 'check-out' | 'end-of-day' } | null = null;
  if (nextStart && nextStart < v.dayEnds) ended = { endedAt: nextStart, endedBy: 'check-out' };
  else if (nextStart || v.dayEnds <= v.now) ended = { endedAt: v.dayEnds, endedBy: 'end-of-day' };
  else {
    // The latest of the forager's visits, on a day not over: whatever was open before it ends where it began.
    await tx.execute(sql`
      update visits v set
        ended_at = least(${visitEnds}, ${at}::timestamptz),
        ended_by = case when ${visitEnds} <= ${at}::timestamptz then 'end-of-day'::visit_end else 'check-out'::visit_end end
      where v.forager_id = ${v.forager.id} and v.ended_at is null`);
  }
  const [opened] = await tx
    .insert(visits)
    .values({ foragerId: v.forager.id, parcelId: v.parcelId, permitId: v.permitId, localDate: v.localDate, startedAt: v.at, endedAt: ended?.endedAt ?? null, endedBy: ended?.endedBy ?? null })
    .returning({ id: visits.id });
  if (!opened) throw new Error('the visit was not inserted');
  return opened.id;
}

/** The flag raised on an entry, for answering an item sent again. */
export async function findFlagOfEntry(db: Executor, { entryId }: { entryId: string }) {
  const [row] = await db.select({ kind: flags.kind, message: flags.message, scopes: flags.scopes, worstState: flags.worstState }).from(flags).where(eq(flags.entryId, entryId));
  return row ?? null;
}

/**
 * The state each permit was in at an instant, from its history (permit_events): the state its latest
 * change at or before that instant left; a permit with no change until after it was not granted yet
 * (`requested`). Changes at one instant are read creation first (the grant, then its activation). A
 * permit with no change after the instant is in its current state, which the caller already has: it
 * is left out.
 */
export async function permitStatesAt(db: Executor, { permitIds, at }: { permitIds: string[]; at: Date }): Promise<Map<string, PermitState>> {
  if (permitIds.length === 0) return new Map();
  const instant = at.toISOString();
  const rows = await db.execute<{ permit_id: string; state: PermitState }>(sql`
    select p.id as permit_id, coalesce((
        select pe.to_state from permit_events pe where pe.permit_id = p.id and pe.at <= ${instant}::timestamptz
        order by pe.at desc, (pe.from_state is null), pe.id limit 1), 'requested'::permit_state) as state
    from unnest(${`{${permitIds.join(',')}}`}::uuid[]) as p(id)
    where exists (select 1 from permit_events pe where pe.permit_id = p.id and pe.at > ${instant}::timestamptz)`);
  return new Map(rows.map((r) => [r.permit_id, r.state]));
}
