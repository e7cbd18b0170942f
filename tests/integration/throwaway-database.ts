import { randomBytes } from 'node:crypto';
import { fileURLToPath } from 'node:url';
import postgres from 'postgres';
import { closeDb, createDb, type Db } from '../../src/db/client';
import { clubMemberships, clubs, parcels, users } from '../../src/db/schema';

/** The drizzle-kit migrations folder, as the app's migrate script reads it. */
export const migrationsFolder = fileURLToPath(new URL('../../drizzle', import.meta.url));

export type ThrowawayDatabase = { name: string; db: Db; drop: () => Promise<void> };

/**
 * An empty database of its own on the test cluster, made through TEST_ADMIN_DATABASE_URL, for tests
 * that write to the append-only tables or must start from nothing. `drop()` ends its connections and drops it.
 */
export async function createThrowawayDatabase(prefix: string): Promise<ThrowawayDatabase> {
  const adminUrl = process.env.TEST_ADMIN_DATABASE_URL;
  if (!adminUrl) throw new Error('TEST_ADMIN_DATABASE_URL is not set');
  const name = `${prefix}_${randomBytes(6).toString('hex')}`;
  const admin = postgres(adminUrl, { max: 1, onnotice: () => {} });
  await admin.unsafe(`create database "${name}"`);
  const url = new URL(adminUrl);
  url.pathname = `/${name}`;
  const db = createDb(url.toString(), { max: 2 });
  return {
    name,
    db,
    async drop() {
      await closeDb(db);
      await admin`select pg_terminate_backend(pid) from pg_stat_activity where datname = ${name} and pid <> pg_backend_pid()`;
      await admin.unsafe(`drop database if exists "${name}"`);
      await admin.end({ timeout: 5 });
    },
  };
}

/** The PostgreSQL error behind a refused query (drizzle wraps it as `cause`); fails when the query succeeds. */
export async function refusal(query: PromiseLike<unknown>): Promise<{ code?: string; message: string; constraint_name?: string }> {
  try {
    await query;
  } catch (error) {
    const cause = (error as { cause?: unknown }).cause;
    return (cause ?? error) as { code?: string; message: string; constraint_name?: string };
  }
  throw new Error('the database accepted a change it should have refused');
}

/** The one row an INSERT … RETURNING gave back; fails when it gave none. */
export async function one<T>(rows: Promise<T[]>): Promise<T> {
  const [row] = await rows;
  if (!row) throw new Error('the row was not inserted');
  return row;
}

/** A person with these roles; their id. */
export async function insertUser(db: Db, email: string, name: string, roles: ('forager' | 'landowner')[] = ['forager']) {
  return (await one(db.insert(users).values({ email, name, roles }).returning({ id: users.id }))).id;
}

/** The REFERENCES §2 ring (876 163.448 m², GeographicLib) as a MultiPolygon: the parcel of the throwaway tests. */
export const referenceRing = [[-75, 45], [-74.99, 45], [-74.99, 45.01], [-75, 45.01], [-75, 45]];
export const referenceBoundary = { type: 'MultiPolygon', coordinates: [[referenceRing]] };

/** A parcel of `ownerId` on the REFERENCES §2 ring, in America/New_York, listed unless said; its id. */
export async function insertReferenceParcel(db: Db, { ownerId, name, status = 'listed' }: { ownerId: string; name: string; status?: 'draft' | 'listed' | 'archived' }) {
  return (await one(db.insert(parcels).values({ ownerId, name, status, boundary: referenceBoundary, areaM2: 876_163.448, timeZone: 'America/New_York' }).returning({ id: parcels.id }))).id;
}

/** A club with its steward and members, every membership active; its id. */
export async function insertClub(db: Db, { slug, name, steward, members }: { slug: string; name: string; steward: string; members: string[] }) {
  const club = (await one(db.insert(clubs).values({ slug, name }).returning({ id: clubs.id }))).id;
  await db.insert(clubMemberships).values([
    { clubId: club, userId: steward, role: 'steward', state: 'active' },
    ...members.map((userId) => ({ clubId: club, userId, role: 'member' as const, state: 'active' as const })),
  ]);
  return club;
}
