import { and, eq, gte, inArray, isNull, ne, or, sql } from 'drizzle-orm';
import { defaultReminderSettings, permitReminderKinds, type AllowanceFact, type DigestParcel, type ClosureFact, type PermitFact, type ReminderFacts, type ReminderSettings } from '../lib/reminders';
import type { Executor } from './client';
import { allowances, closures, clubMemberships, clubs, parcels, permits, reminderSettings, species, users } from './schema';
import { uuidArray } from './arrays';

/** A person's reminder switches; every kind on when they never changed one. */
export async function getReminderSettings(db: Executor, { userId }: { userId: string }): Promise<ReminderSettings> {
  const [row] = await db
    .select({ permitEnding: reminderSettings.permitEnding, seasonOpening: reminderSettings.seasonOpening, closureStarting: reminderSettings.closureStarting, weeklyDigest: reminderSettings.weeklyDigest })
    .from(reminderSettings)
    .where(eq(reminderSettings.userId, userId));
  return row ?? { ...defaultReminderSettings };
}

/** Keeps a person's switches, their own row only. */
export async function saveReminderSettings(db: Executor, { userId, settings, now }: { userId: string; settings: ReminderSettings; now: Date }): Promise<ReminderSettings> {
  await db
    .insert(reminderSettings)
    .values({ userId, ...settings, updatedAt: now })
    .onConflictDoUpdate({ target: reminderSettings.userId, set: { ...settings, updatedAt: now } });
  return getReminderSettings(db, { userId });
}

const usableStates = ['approved', 'active'] as const;

/**
 * Everyone who holds, or is an active member of a club that holds, an approved or active permit on a
 * parcel that is not archived: the people a reminder could be due for.
 */
export async function listReminderRecipients(db: Executor): Promise<{ userId: string; email: string }[]> {
  const rows = await db
    .selectDistinct({ userId: users.id, email: users.email })
    .from(permits)
    .innerJoin(parcels, and(eq(parcels.id, permits.parcelId), ne(parcels.status, 'archived')))
    .leftJoin(clubMemberships, and(eq(clubMemberships.clubId, permits.holderClubId), eq(clubMemberships.state, 'active')))
    .innerJoin(users, or(eq(users.id, permits.holderUserId), eq(users.id, clubMemberships.userId)))
    .where(inArray(permits.state, [...usableStates]));
  return rows.sort((a, b) => a.userId.localeCompare(b.userId));
}

/**
 * What the reminders of one person are worked out from (src/lib/reminders.ts): their switches, the
 * approved and active permits they hold or their clubs hold, and the allowances and closures of
 * those parcels. Every part is scoped to that person in its own WHERE clause.
 */
export async function loadReminderFacts(db: Executor, { userId, now }: { userId: string; now: Date }): Promise<ReminderFacts> {
  const settings = await getReminderSettings(db, { userId });
  // Someone who switched every kind off is due nothing: their permits and parcels are not read.
  if (!permitReminderKinds.some((kind) => settings[kind])) return { userId, settings, permits: [], allowances: [], closures: [] };
  const columns = {
    permitId: permits.id, parcelId: permits.parcelId, parcelName: parcels.name, timeZone: parcels.timeZone, startsOn: permits.startsOn, endsOn: permits.endsOn,
  };
  const own = await db
    .select(columns)
    .from(permits)
    .innerJoin(parcels, and(eq(parcels.id, permits.parcelId), ne(parcels.status, 'archived')))
    .where(and(eq(permits.holderUserId, userId), inArray(permits.state, [...usableStates])));
  const viaClub = await db
    .select({ ...columns, role: clubMemberships.role, clubName: clubs.name })
    .from(permits)
    .innerJoin(parcels, and(eq(parcels.id, permits.parcelId), ne(parcels.status, 'archived')))
    .innerJoin(clubMemberships, and(eq(clubMemberships.clubId, permits.holderClubId), eq(clubMemberships.userId, userId), eq(clubMemberships.state, 'active')))
    .innerJoin(clubs, eq(clubs.id, permits.holderClubId))
    .where(inArray(permits.state, [...usableStates]));
  const permitFacts: PermitFact[] = [
    ...own.map((p) => ({ ...p, as: 'holder' as const, clubName: null })),
    ...viaClub.map(({ role, ...p }) => ({ ...p, as: role === 'steward' ? ('steward' as const) : ('member' as const) })),
  ];
  const parcelIds = [...new Set(permitFacts.map((p) => p.parcelId))];
  if (parcelIds.length === 0) return { userId, settings, permits: [], allowances: [], closures: [] };

  const allowanceFacts: AllowanceFact[] = await db
    .select({ parcelId: allowances.parcelId, speciesName: species.commonName, seasons: allowances.seasons })
    .from(allowances)
    .innerJoin(species, eq(species.id, allowances.speciesId))
    .where(and(sql`${allowances.parcelId} = any(${uuidArray(parcelIds)})`, isNull(allowances.removedAt)));
  // A coarse cut only: no zone's "tomorrow" is before the UTC date of a day ago. The pure part decides by each parcel's own date.
  const since = new Date(now.getTime() - 86_400_000).toISOString().slice(0, 10);
  const closureFacts: ClosureFact[] = await db
    .select({ closureId: closures.id, parcelId: closures.parcelId, startsOn: closures.startsOn, endsOn: closures.endsOn, reason: closures.reason })
    .from(closures)
    .where(and(sql`${closures.parcelId} = any(${uuidArray(parcelIds)})`, gte(closures.startsOn, since)));
  return { userId, settings, permits: permitFacts, allowances: allowanceFacts, closures: closureFacts };
}

/**
 * Landowners with a parcel that is not archived, each with the zone of their first parcel (the
 * oldest), which their digest's Monday is counted in, and their switches.
 */
export async function listDigestLandowners(db: Executor): Promise<{ userId: string; email: string; timeZone: string; settings: ReminderSettings }[]> {
  const rows = await db.execute<{ userId: string; email: string; timeZone: string }>(sql`
    select distinct on (u.id) u.id as "userId", u.email, p.time_zone as "timeZone"
    from users u join parcels p on p.owner_id = u.id
    where 'landowner' = any(u.roles) and p.status <> 'archived'
    order by u.id, p.created_at, p.id`);
  return Promise.all([...rows].map(async (row) => ({ ...row, settings: await getReminderSettings(db, { userId: row.userId }) })));
}

/**
 * One landowner's week, per parcel of theirs that is not archived: harvest entries counted on a local
 * date of the week, flags raised and access requests made between its first and last instants.
 */
export async function digestCounts(db: Executor, { ownerId, from, to, startsAt, endsAt }: { ownerId: string; from: string; to: string; startsAt: Date; endsAt: Date }): Promise<DigestParcel[]> {
  const rows = await db.execute<DigestParcel>(sql`
    select p.id as "parcelId", p.name as "parcelName",
      (select count(*)::int from harvest_entries e where e.parcel_id = p.id and e.local_date between ${from} and ${to}) as "entries",
      (select count(*)::int from flags f where f.parcel_id = p.id and f.created_at >= ${startsAt.toISOString()} and f.created_at < ${endsAt.toISOString()}) as "flags",
      (select count(*)::int from permits r where r.parcel_id = p.id and r.requested_by is not null and r.created_at >= ${startsAt.toISOString()} and r.created_at < ${endsAt.toISOString()}) as "requests"
    from parcels p
    where p.owner_id = ${ownerId} and p.status <> 'archived'`);
  return [...rows];
}
