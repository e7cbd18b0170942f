import { sql } from 'drizzle-orm';
import { migrate } from 'drizzle-orm/postgres-js/migrator';
import journal from '../../drizzle/meta/_journal.json';
import type { Db, Executor } from './client';

/** Applies every migration in drizzle/ that the database has not had yet. */
export async function applyMigrations(db: Db, migrationsFolder: string) {
  await migrate(db, { migrationsFolder });
}

/** How many of the migrations this build knows about the database has applied. */
export async function migrationStatus(db: Executor) {
  const known = journal.entries.length;
  const [table] = await db.execute<{ present: boolean }>(sql`select to_regclass('drizzle.__drizzle_migrations') is not null as present`);
  const rows = table?.present
    ? await db.execute<{ applied: number }>(sql`select count(*)::int as applied from drizzle.__drizzle_migrations`)
    : [];
  const applied = rows[0]?.applied ?? 0;
  return { known, applied, upToDate: applied >= known };
}

export async function postgisVersion(db: Executor) {
  const rows = await db.execute<{ version: string }>(sql`select postgis_lib_version() as version`);
  return rows[0]?.version ?? null;
}
