import { asc, eq, inArray, sql } from 'drizzle-orm';
import type { Executor } from './client';
import { clubMemberships, clubs, users } from './schema';

/** The clubs a steward runs, each with its memberships (past ones too: history stays). */
export async function listClubsWithMembers(db: Executor, { clubIds }: { clubIds: string[] }) {
  if (clubIds.length === 0) return [];
  const rows = await db
    .select({
      clubId: clubs.id,
      clubName: clubs.name,
      description: clubs.description,
      membershipId: clubMemberships.id,
      userId: users.id,
      memberName: users.name,
      memberEmail: users.email,
      role: clubMemberships.role,
      state: clubMemberships.state,
      joinedAt: clubMemberships.joinedAt,
    })
    .from(clubs)
    .innerJoin(clubMemberships, eq(clubMemberships.clubId, clubs.id))
    .innerJoin(users, eq(users.id, clubMemberships.userId))
    .where(inArray(clubs.id, clubIds))
    .orderBy(asc(clubs.name), asc(clubMemberships.role), asc(users.name));
  const byClub = new Map<string, { id: string; name: string; description: string; members: typeof rows }>();
  for (const row of rows) {
    const club = byClub.get(row.clubId) ?? { id: row.clubId, name: row.clubName, description: row.description, members: [] };
    club.members.push(row);
    byClub.set(row.clubId, club);
  }
  return [...byClub.values()];
}

/** Every club, by name: a landowner may grant a permit to any of them. */
export async function listClubs(db: Executor) {
  return db.select({ id: clubs.id, name: clubs.name }).from(clubs).orderBy(asc(clubs.name));
}

/** A person's memberships and invitations, current and past, with the club's name. */
export async function listMyMemberships(db: Executor, { userId }: { userId: string }) {
  return db
    .select({
      membershipId: clubMemberships.id,
      clubId: clubs.id,
      clubName: clubs.name,
      description: clubs.description,
      role: clubMemberships.role,
      state: clubMemberships.state,
      joinedAt: clubMemberships.joinedAt,
      endedAt: clubMemberships.endedAt,
      invitedByName: sql<string | null>`(select coalesce(i.name, i.email) from users i where i.id = ${clubMemberships.invitedBy})`,
    })
    .from(clubMemberships)
    .innerJoin(clubs, eq(clubs.id, clubMemberships.clubId))
    .where(eq(clubMemberships.userId, userId))
    .orderBy(asc(clubs.name));
}

export type ClubPermitLimit = { commonName: string; scope: string; quantity: string; unit: string };

/** The club's permits and requests on other people's parcels, with the club-wide and tighter limits each adds. */
export async function listClubPermits(db: Executor, { clubId }: { clubId: string }) {
  const rows = await db.execute<{ id: string; parcel_id: string; parcel_name: string; time_zone: string; owner_name: string; state: string; starts_on: string; ends_on: string; limits: ClubPermitLimit[] }>(sql`
    select pm.id, p.id as parcel_id, p.name as parcel_name, p.time_zone, coalesce(o.name, o.email) as owner_name, pm.state::text, pm.starts_on::text, pm.ends_on::text,
      coalesce((select json_agg(json_build_object('commonName', s.common_name, 'scope', l.scope, 'quantity', trim_scale(l.quantity)::text, 'unit', l.unit) order by s.common_name, l.scope)
        from limits l join allowances a on a.id = l.allowance_id join species s on s.id = a.species_id where l.permit_id = pm.id), '[]') as limits
    from permits pm join parcels p on p.id = pm.parcel_id join users o on o.id = p.owner_id
    where pm.holder_club_id = ${clubId}::uuid
    order by p.name, pm.starts_on desc`);
  return rows.map((r) => ({ id: r.id, parcelId: r.parcel_id, parcelName: r.parcel_name, timeZone: r.time_zone, ownerName: r.owner_name, state: r.state, startsOn: r.starts_on, endsOn: r.ends_on, limits: r.limits }));
}
