import { and, asc, eq, gt, isNull, sql } from 'drizzle-orm';
import type { AccountRole, Actor } from '../lib/actor';
import { executePrepared, type Executor } from './client';
import { auditEvents, clubMemberships, sessions, users } from './schema';

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

/** A landowner's claimed land and note are kept for the admin who verifies them; a forager's are not asked for. */
export async function createAccount(db: Executor, input: { email: string; name: string; managesLand: boolean; claimedLand?: string | null; signUpNote?: string | null }) {
  const roles: AccountRole[] = input.managesLand ? ['forager', 'landowner'] : ['forager'];
  const claim = input.managesLand ? { claimedLand: input.claimedLand ?? null, signUpNote: input.signUpNote ?? null } : {};
  const rows = await db
    .insert(users)
    .values({ email: input.email.toLowerCase(), name: input.name, roles, ...claim })
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
    .select({ id: users.id, email: users.email, name: users.name, roles: users.roles, landownerVerifiedAt: users.landownerVerifiedAt, landownerDeclinedAt: users.landownerDeclinedAt, emailVerified: users.emailVerified })
    .from(users)
    .orderBy(asc(users.email));
}

const isAdmin = (adminId: string) => sql`exists (select 1 from ${users} as admin where admin.id = ${adminId} and 'admin' = any(admin.roles))`;

/**
 * What a landowner sent at sign-up, for the admin who verifies them; null unless `adminId` is an
 * admin and the account is a landowner.
 */
export async function findLandownerClaim(db: Executor, { userId, adminId }: { userId: string; adminId: string }) {
  const [row] = await db
    .select({
      id: users.id, email: users.email, name: users.name, createdAt: users.createdAt, claimedLand: users.claimedLand, signUpNote: users.signUpNote,
      landownerVerifiedAt: users.landownerVerifiedAt, landownerDeclinedAt: users.landownerDeclinedAt, landownerDeclineReason: users.landownerDeclineReason,
    })
    .from(users)
    .where(and(eq(users.id, userId), sql`'landowner' = any(${users.roles})`, isAdmin(adminId)));
  return row ?? null;
}

/** Marks a landowner verified; null when the account is not an unverified landowner or `adminId` is no admin. */
export async function verifyLandowner(db: Executor, { userId, adminId, now }: { userId: string; adminId: string; now: Date }) {
  return db.transaction(async (tx) => {
    const rows = await tx
      .update(users)
      .set({ landownerVerifiedAt: now, landownerVerifiedBy: adminId, landownerDeclinedAt: null, landownerDeclineReason: null })
      .where(and(eq(users.id, userId), sql`'landowner' = any(${users.roles})`, isNull(users.landownerVerifiedAt), isAdmin(adminId)))
      .returning({ id: users.id, email: users.email, name: users.name });
    const row = rows[0];
    if (!row) return null;
    await tx.insert(auditEvents).values({ actorId: adminId, action: 'landowner.verified', subjectType: 'user', subjectId: row.id, detail: {}, at: now });
    return row;
  });
}

/**
 * Declines to verify a landowner, with the reason they are sent; they stay an unverified landowner and
 * may be verified later. Null when the account is not an unverified landowner or `adminId` is no admin.
 */
export async function declineLandowner(db: Executor, { userId, adminId, reason, now }: { userId: string; adminId: string; reason: string; now: Date }) {
  return db.transaction(async (tx) => {
    const rows = await tx
      .update(users)
      .set({ landownerDeclinedAt: now, landownerDeclineReason: reason })
      .where(and(eq(users.id, userId), sql`'landowner' = any(${users.roles})`, isNull(users.landownerVerifiedAt), isAdmin(adminId)))
      .returning({ id: users.id, email: users.email, name: users.name });
    const row = rows[0];
    if (!row) return null;
    await tx.insert(auditEvents).values({ actorId: adminId, action: 'landowner.declined', subjectType: 'user', subjectId: row.id, detail: { reason }, at: now });
    return row;
  });
}
