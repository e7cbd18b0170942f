import { and, asc, eq, gt, isNull, sql } from 'drizzle-orm';
import type { AccountRole, Actor } from '../lib/actor';
import { executePrepared, type Executor } from './client';
import { clubMemberships, sessions, users } from './schema';

/**
 * Every signed-in request runs this, so it is a prepared statement with a generic plan: the session
 * by its key first, then the person by theirs, never a join that could scan users
 * (tests/integration/check-in-plans.test.ts).
 */
export function actorBySessionQuery({ sessionToken, now }: { sessionToken: string; now: Date }) {
  return sql`
    select u.id, u.email, u.name, u.roles::text[] as roles, u.landowner_verified_at is not null as verified,
      array(select m.club_id from club_memberships m where m.user_id = u.id and m.state = 'active' and m.role = 'steward') as steward_of,
      array(select m.club_id from club_memberships m where m.user_id = u.id and m.state = 'active') as member_of
    from users u
    where u.id = (select s.user_id from sessions s where s.session_token = ${sessionToken}::text and s.expires > ${now.toISOString()}::timestamptz)`;
}

/** The person behind a session token, with their stewardships, or null when the session is gone. */
export async function findActorBySession(db: Executor, { sessionToken, now }: { sessionToken: string; now: Date }): Promise<Actor | null> {
  const [row] = await executePrepared<{ id: string; email: string; name: string | null; roles: AccountRole[]; verified: boolean; steward_of: string[]; member_of: string[] }>(db, actorBySessionQuery({ sessionToken, now }));
  if (!row) return null;
  return {
    id: row.id,
    email: row.email,
    name: row.name,
    roles: row.roles,
    landownerVerified: row.verified,
    stewardOfClubIds: row.steward_of,
    memberOfClubIds: row.member_of,
  };
}

export async function findUserByEmail(db: Executor, { email }: { email: string }) {
  const rows = await db.select().from(users).where(eq(users.email, email.toLowerCase()));
  return rows[0] ?? null;
}

export async function createAccount(db: Executor, input: { email: string; name: string; managesLand: boolean }) {
  const roles: AccountRole[] = input.managesLand ? ['forager', 'landowner'] : ['forager'];
  const rows = await db
    .insert(users)
    .values({ email: input.email.toLowerCase(), name: input.name, roles })
    .onConflictDoNothing({ target: users.email })
    .returning();
  return rows[0] ?? null;
}

export async function deleteSession(db: Executor, { sessionToken }: { sessionToken: string }) {
  await db.delete(sessions).where(eq(sessions.sessionToken, sessionToken));
}

/** Landowners waiting for an admin to verify them. */
export async function listUnverifiedLandowners(db: Executor) {
  return db
    .select({ id: users.id, email: users.email, name: users.name, createdAt: users.createdAt })
    .from(users)
    .where(and(sql`'landowner' = any(${users.roles})`, isNull(users.landownerVerifiedAt)))
    .orderBy(asc(users.createdAt));
}

export async function listAccounts(db: Executor) {
  return db
    .select({ id: users.id, email: users.email, name: users.name, roles: users.roles, landownerVerifiedAt: users.landownerVerifiedAt, emailVerified: users.emailVerified })
    .from(users)
    .orderBy(asc(users.email));
}

/** Marks a landowner verified; null when the account is not an unverified landowner or `adminId` is no admin. */
export async function verifyLandowner(db: Executor, { userId, adminId, now }: { userId: string; adminId: string; now: Date }) {
  const isAdmin = sql`exists (select 1 from ${users} as admin where admin.id = ${adminId} and 'admin' = any(admin.roles))`;
  const rows = await db
    .update(users)
    .set({ landownerVerifiedAt: now, landownerVerifiedBy: adminId })
    .where(and(eq(users.id, userId), sql`'landowner' = any(${users.roles})`, isNull(users.landownerVerifiedAt), isAdmin))
    .returning({ id: users.id, email: users.email });
  return rows[0] ?? null;
}
