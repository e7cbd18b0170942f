import { randomUUID } from 'node:crypto';
import { eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createAccount, findActorBySession, findUserByEmail, verifyLandowner } from '../../src/db/accounts.queries';
import { applyMigrations } from '../../src/db/migrations';
import { clubMemberships, clubs, sessions, users } from '../../src/db/schema';
import { createThrowawayDatabase, migrationsFolder, type ThrowawayDatabase } from './throwaway-database';

/** The demo's "today" (data/demo/README.md); time is an argument, never the clock. */
const now = new Date('2026-12-01T12:00:00Z');
const inOneHour = new Date(now.getTime() + 60 * 60 * 1000);

let throwaway: ThrowawayDatabase | undefined;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_accounts');
  await applyMigrations(throwaway.db, migrationsFolder);
});

afterAll(async () => {
  await throwaway?.drop();
});

/** A new account and a session for it that ends at `expires`. */
async function signUp(input: { email: string; name: string; managesLand: boolean }, expires = inOneHour) {
  const user = await createAccount(db(), input);
  if (!user) throw new Error(`${input.email} was not created`);
  const sessionToken = randomUUID();
  await db().insert(sessions).values({ sessionToken, userId: user.id, expires });
  return { user, sessionToken };
}

async function makeClub(slug: string) {
  const [club] = await db().insert(clubs).values({ slug, name: slug }).returning({ id: clubs.id });
  if (!club) throw new Error(`club ${slug} was not created`);
  return club.id;
}

describe('createAccount and findActorBySession', () => {
  it('given someone who manages land, it makes a forager and landowner who is not yet verified', async () => {
    const { user, sessionToken } = await signUp({ email: 'Ruth.Alder@Example.org', name: 'Ruth Alder', managesLand: true });
    expect(user.email).toBe('ruth.alder@example.org');
    const actor = await findActorBySession(db(), { sessionToken, now });
    expect(actor).toEqual({
      id: user.id,
      email: 'ruth.alder@example.org',
      name: 'Ruth Alder',
      roles: expect.arrayContaining(['forager', 'landowner']),
      landownerVerified: false,
      stewardOfClubIds: [],
      memberOfClubIds: [],
    });
    expect(actor?.roles).toHaveLength(2);
  });

  it('given someone who does not manage land, it makes a forager only', async () => {
    const { sessionToken } = await signUp({ email: 'finn.birch@example.org', name: 'Finn Birch', managesLand: false });
    const actor = await findActorBySession(db(), { sessionToken, now });
    expect(actor?.roles).toEqual(['forager']);
  });

  it('given an active steward membership, stewardOfClubIds and memberOfClubIds contain the club', async () => {
    const { user, sessionToken } = await signUp({ email: 'steward.one@example.org', name: 'Steward One', managesLand: false });
    const clubId = await makeClub('steward-test-club');
    await db().insert(clubMemberships).values({ clubId, userId: user.id, role: 'steward', state: 'active', joinedAt: now });
    const actor = await findActorBySession(db(), { sessionToken, now });
    expect(actor?.stewardOfClubIds).toEqual([clubId]);
    expect(actor?.memberOfClubIds).toEqual([clubId]);
  });

  it('given an active plain membership and an invited stewardship, it counts the member and no stewardship', async () => {
    const { user, sessionToken } = await signUp({ email: 'member.two@example.org', name: 'Member Two', managesLand: false });
    const memberClub = await makeClub('member-test-club');
    const invitedClub = await makeClub('invited-test-club');
    await db().insert(clubMemberships).values([
      { clubId: memberClub, userId: user.id, role: 'member', state: 'active', joinedAt: now },
      { clubId: invitedClub, userId: user.id, role: 'steward', state: 'invited' },
    ]);
    const actor = await findActorBySession(db(), { sessionToken, now });
    expect(actor?.stewardOfClubIds).toEqual([]);
    expect(actor?.memberOfClubIds).toEqual([memberClub]);
  });

  it('given a steward who has left the club, it no longer counts the stewardship', async () => {
    const { user, sessionToken } = await signUp({ email: 'former.steward@example.org', name: 'Former Steward', managesLand: false });
    const clubId = await makeClub('left-test-club');
    await db().insert(clubMemberships).values({ clubId, userId: user.id, role: 'steward', state: 'left', joinedAt: now, endedAt: now });
    const actor = await findActorBySession(db(), { sessionToken, now });
    expect(actor).not.toBeNull();
    expect(actor?.stewardOfClubIds).toEqual([]);
    expect(actor?.memberOfClubIds).toEqual([]);
  });

  it('given a session that expired a minute ago, it finds nobody', async () => {
    const { sessionToken } = await signUp({ email: 'expired@example.org', name: 'Expired', managesLand: false }, new Date(now.getTime() - 60_000));
    expect(await findActorBySession(db(), { sessionToken, now })).toBeNull();
  });

  it('given a session token that was never issued, it finds nobody', async () => {
    expect(await findActorBySession(db(), { sessionToken: randomUUID(), now })).toBeNull();
  });

  it('given an address already taken in other letter cases, it creates nothing and returns null', async () => {
    await signUp({ email: 'case.test@example.org', name: 'First', managesLand: false });
    expect(await createAccount(db(), { email: 'CASE.Test@Example.ORG', name: 'Second', managesLand: true })).toBeNull();
    const [row] = await db().select({ n: sql<number>`count(*)::int` }).from(users).where(eq(users.email, 'case.test@example.org'));
    expect(row?.n).toBe(1);
    expect((await findUserByEmail(db(), { email: 'Case.Test@example.org' }))?.name).toBe('First');
  });
});

describe('verifyLandowner', () => {
  it('given an unverified landowner, it verifies them once and returns null the second time', async () => {
    const [admin] = await db().insert(users).values({ email: 'admin.test@example.org', name: 'Admin', roles: ['admin'] }).returning();
    const { user, sessionToken } = await signUp({ email: 'to.verify@example.org', name: 'To Verify', managesLand: true });
    if (!admin) throw new Error('the admin was not created');
    const notAdmin = await createAccount(db(), { email: 'not.admin@example.org', name: 'Not Admin', managesLand: false });
    if (!notAdmin) throw new Error('the forager was not created');
    expect(await verifyLandowner(db(), { userId: user.id, adminId: notAdmin.id, now })).toBeNull();

    expect(await verifyLandowner(db(), { userId: user.id, adminId: admin.id, now })).toEqual({ id: user.id, email: 'to.verify@example.org', name: 'To Verify' });
    expect((await findActorBySession(db(), { sessionToken, now }))?.landownerVerified).toBe(true);
    const [stored] = await db().select().from(users).where(eq(users.id, user.id));
    expect(stored?.landownerVerifiedAt?.toISOString()).toBe(now.toISOString());
    expect(stored?.landownerVerifiedBy).toBe(admin.id);

    const later = new Date(now.getTime() + 86_400_000);
    expect(await verifyLandowner(db(), { userId: user.id, adminId: admin.id, now: later })).toBeNull();
    const [unchanged] = await db().select().from(users).where(eq(users.id, user.id));
    expect(unchanged?.landownerVerifiedAt?.toISOString()).toBe(now.toISOString());
  });

  it('given a forager who manages no land, it refuses to verify them as a landowner', async () => {
    const { user } = await signUp({ email: 'just.forager@example.org', name: 'Just Forager', managesLand: false });
    expect(await verifyLandowner(db(), { userId: user.id, adminId: user.id, now })).toBeNull();
    const [stored] = await db().select().from(users).where(eq(users.id, user.id));
    expect(stored?.landownerVerifiedAt).toBeNull();
  });
});
