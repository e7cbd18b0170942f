import { asc, eq, inArray } from 'drizzle-orm';
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
