import { and, eq, isNull, sql } from 'drizzle-orm';
import type { FeedParcel } from '../lib/calendar-events';
import type { Forager } from '../lib/field/types';
import type { Executor } from './client';
import { calendarFeeds } from './schema';

/**
 * A person's live calendar feed: made anew (the old one revoked in the same transaction, so an
 * old address stops working as the new one starts) or revoked. Only the token's hash is stored
 * (src/lib/calendar-feed.ts makes both).
 */
export async function replaceCalendarFeed(db: Executor, { accountId, tokenHash, now }: { accountId: string; tokenHash: string; now: Date }) {
  return db.transaction(async (tx) => {
    await tx.update(calendarFeeds).set({ revokedAt: now }).where(and(eq(calendarFeeds.accountId, accountId), isNull(calendarFeeds.revokedAt)));
    const [feed] = await tx.insert(calendarFeeds).values({ accountId, tokenHash, createdAt: now }).returning({ id: calendarFeeds.id, createdAt: calendarFeeds.createdAt });
    if (!feed) throw new Error('the calendar feed was not saved');
    return feed;
  });
}

/** Revokes the person's live feed; whether there was one. */
export async function revokeCalendarFeed(db: Executor, { accountId, now }: { accountId: string; now: Date }): Promise<boolean> {
  const revoked = await db
    .update(calendarFeeds)
    .set({ revokedAt: now })
    .where(and(eq(calendarFeeds.accountId, accountId), isNull(calendarFeeds.revokedAt)))
    .returning({ id: calendarFeeds.id });
  return revoked.length > 0;
}

/** When the person's live feed was made, or null with none. */
export async function findLiveCalendarFeed(db: Executor, { accountId }: { accountId: string }) {
  const [feed] = await db
    .select({ id: calendarFeeds.id, createdAt: calendarFeeds.createdAt })
    .from(calendarFeeds)
    .where(and(eq(calendarFeeds.accountId, accountId), isNull(calendarFeeds.revokedAt)));
  return feed ?? null;
}

/**
 * The person a live feed's token hash belongs to, with their active clubs (what the feed's queries
 * are scoped by), or null for an unknown or revoked token.
 */
export async function findFeedOwner(db: Executor, { tokenHash }: { tokenHash: string }): Promise<Forager | null> {
  const [row] = await db.execute<{ id: string; club_ids: string[] }>(sql`
    select u.id, array(select m.club_id from club_memberships m where m.user_id = u.id and m.state = 'active') as club_ids
    from calendar_feeds f join users u on u.id = f.account_id
    where f.token_hash = ${tokenHash} and f.revoked_at is null`);
  return row ? { id: row.id, clubIds: row.club_ids } : null;
}

/**
 * The owner's listed parcels as their calendar shows them: closures, and each allowed species with
 * its seasons. Drafts and archived parcels have no dates in force, so they are left out.
 */
export async function listOwnParcelsForCalendar(db: Executor, { ownerId }: { ownerId: string }): Promise<FeedParcel[]> {
  const rows = await db.execute<{ id: string; name: string; time_zone: string; closures: FeedParcel['closures']; allowances: FeedParcel['allowances'] }>(sql`
    select p.id, p.name, p.time_zone,
      coalesce((select json_agg(json_build_object('startsOn', c.starts_on::text, 'endsOn', c.ends_on::text, 'reason', c.reason) order by c.starts_on)
        from closures c where c.parcel_id = p.id), '[]') as closures,
      coalesce((select json_agg(json_build_object('speciesId', s.id, 'commonName', s.common_name, 'seasons', a.seasons) order by s.common_name)
        from allowances a join species s on s.id = a.species_id where a.parcel_id = p.id and a.removed_at is null), '[]') as allowances
    from parcels p
    where p.owner_id = ${ownerId} and p.status = 'listed'
    order by p.name, p.id`);
  return rows.map((r) => ({ id: String(r.id), name: r.name, timeZone: r.time_zone, closures: r.closures, allowances: r.allowances }));
}
