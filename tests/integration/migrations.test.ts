import { is, sql } from 'drizzle-orm';
import { getTableConfig, PgTable } from 'drizzle-orm/pg-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { applyMigrations, migrationStatus, postgisVersion } from '../../src/db/migrations';
import * as schema from '../../src/db/schema';
import { clubs, harvestEntries, parcels, permitEvents, permits, species, users } from '../../src/db/schema';
import { createThrowawayDatabase, migrationsFolder, refusal, type ThrowawayDatabase } from './throwaway-database';

// SQLSTATE codes, PostgreSQL manual Appendix A (from memory ✱).
const restrictViolation = '23001';
const uniqueViolation = '23505';
const checkViolation = '23514';

/** A 0.001° square near the demo valley, closed and counter-clockwise (RFC 7946 §3.1.6 ✔). */
const smallSquare = {
  type: 'Polygon',
  coordinates: [[[-72.85, 43.95], [-72.849, 43.95], [-72.849, 43.951], [-72.85, 43.951], [-72.85, 43.95]]],
};

let throwaway: ThrowawayDatabase | undefined;
let before: Awaited<ReturnType<typeof migrationStatus>>;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_migrations');
  before = await migrationStatus(throwaway.db);
  await applyMigrations(throwaway.db, migrationsFolder);
});

afterAll(async () => {
  await throwaway?.drop();
});

describe('applyMigrations on an empty database', () => {
  it('given a database that never had a migration, migrationStatus reported none applied and not up to date', () => {
    expect(before).toMatchObject({ applied: 0, upToDate: false });
    expect(before.known).toBeGreaterThan(0);
  });

  it('given the migrations applied, migrationStatus says every known migration is applied', async () => {
    const status = await migrationStatus(db());
    expect(status.upToDate).toBe(true);
    expect(status.applied).toBe(status.known);
  });

  it('given the migrations applied twice, it applies nothing the second time', async () => {
    await applyMigrations(db(), migrationsFolder);
    const status = await migrationStatus(db());
    expect(status.applied).toBe(status.known);
  });

  it('given the PostGIS migration, PostGIS 3 is installed', async () => {
    expect(await postgisVersion(db())).toMatch(/^3\./);
  });

  it('given every table in src/db/schema, the database has it with every column', async () => {
    const tables = (Object.values(schema) as unknown[]).filter((value): value is PgTable => is(value, PgTable)).map((table) => getTableConfig(table));
    expect(tables.length).toBeGreaterThanOrEqual(20);
    const rows = await db().execute<{ table_name: string; column_name: string }>(
      sql`select table_name, column_name from information_schema.columns where table_schema = 'public'`,
    );
    const present = new Set(rows.map((row) => `${row.table_name}.${row.column_name}`));
    for (const table of tables) {
      for (const column of table.columns) expect(present.has(`${table.name}.${column.name}`), `${table.name}.${column.name}`).toBe(true);
    }
  });

  it('given parcels.boundary, it has a GiST index on the geometry and one on its geography cast', async () => {
    const rows = await db().execute<{ indexdef: string }>(sql`select indexdef from pg_indexes where schemaname = 'public' and tablename = 'parcels'`);
    const definitions = rows.map((row) => row.indexdef);
    expect(definitions.some((d) => /USING gist \(boundary\)/.test(d))).toBe(true);
    expect(definitions.some((d) => /USING gist \(\(\(?boundary\)?::geography\)\)/.test(d))).toBe(true);
  });
});

describe('the append-only records and constraints', () => {
  let entryId: string;
  let eventId: string;
  let userId: string;
  let parcelId: string;
  let speciesId: string;
  let clubId: string;

  const entry = (idempotencyKey: string) => ({
    idempotencyKey,
    foragerId: userId,
    parcelId,
    speciesId,
    method: 'pick' as const,
    quantity: '1',
    unit: 'us-quart' as const,
    dimension: 'volume' as const,
    baseQuantity: '946.352946', // 1 US liquid quart in mL (REFERENCES §1 ⚙)
    localDate: '2026-07-15',
    recordedBy: userId,
  });

  beforeAll(async () => {
    const [user] = await db().insert(users).values({ email: 'ledger@example.org', name: 'Ledger Tester', roles: ['forager', 'landowner'] }).returning();
    const [kind] = await db()
      .insert(species)
      .values({ slug: 'test-blueberry', scientificName: 'Vaccinium angustifolium', commonName: 'Lowbush blueberry', kind: 'fruit', usualUnit: 'us-quart', cautions: ['Test caution.'] })
      .returning();
    if (!user || !kind) throw new Error('fixture rows were not inserted');
    userId = user.id;
    speciesId = kind.id;
    const [parcel] = await db()
      .insert(parcels)
      .values({ ownerId: userId, name: 'Test Lot', boundary: smallSquare, areaM2: 8900, timeZone: 'America/New_York' })
      .returning({ id: parcels.id });
    const [club] = await db().insert(clubs).values({ slug: 'test-club', name: 'Test Club' }).returning({ id: clubs.id });
    if (!parcel || !club) throw new Error('fixture rows were not inserted');
    parcelId = parcel.id;
    clubId = club.id;
    const [permit] = await db()
      .insert(permits)
      .values({ parcelId, holderUserId: userId, state: 'requested', startsOn: '2026-06-01', endsOn: '2026-09-30' })
      .returning({ id: permits.id });
    if (!permit) throw new Error('the permit was not inserted');
    const [event] = await db().insert(permitEvents).values({ permitId: permit.id, fromState: null, toState: 'requested', actorId: userId }).returning({ id: permitEvents.id });
    const [inserted] = await db().insert(harvestEntries).values(entry('key-1')).returning({ id: harvestEntries.id });
    if (!event || !inserted) throw new Error('the ledger rows were not inserted');
    eventId = event.id;
    entryId = inserted.id;
  });

  it('given a harvest entry, it refuses an UPDATE of it', async () => {
    const error = await refusal(db().execute(sql`update harvest_entries set quantity = 2 where id = ${entryId}`));
    expect(error.code).toBe(restrictViolation);
    expect(error.message).toMatch(/harvest_entries is append-only: UPDATE refused/);
  });

  it('given a harvest entry, it refuses a DELETE of it', async () => {
    const error = await refusal(db().execute(sql`delete from harvest_entries where id = ${entryId}`));
    expect(error.code).toBe(restrictViolation);
    expect(error.message).toMatch(/harvest_entries is append-only: DELETE refused/);
  });

  it('given the ledger, it refuses a TRUNCATE of it, even one that would take its flags along', async () => {
    // Plain TRUNCATE stops at the flags' foreign key first; CASCADE reaches the ledger's own trigger.
    const error = await refusal(db().execute(sql`truncate harvest_entries cascade`));
    expect(error.message).toMatch(/harvest_entries is append-only: TRUNCATE refused/);
  });

  it('given a permit event, it refuses an UPDATE and a DELETE of it', async () => {
    const update = await refusal(db().execute(sql`update permit_events set reason = 'rewritten' where id = ${eventId}`));
    expect(update).toMatchObject({ code: restrictViolation, message: expect.stringMatching(/permit_events is append-only: UPDATE/) });
    const remove = await refusal(db().execute(sql`delete from permit_events where id = ${eventId}`));
    expect(remove).toMatchObject({ code: restrictViolation, message: expect.stringMatching(/permit_events is append-only: DELETE/) });
  });

  it('given an audit event, it refuses an UPDATE and a DELETE of it', async () => {
    await db().execute(sql`insert into audit_events (action, subject_type, subject_id) values ('test', 'parcel', ${parcelId})`);
    expect((await refusal(db().execute(sql`update audit_events set action = 'other'`))).code).toBe(restrictViolation);
    expect((await refusal(db().execute(sql`delete from audit_events`))).code).toBe(restrictViolation);
  });

  it('given the refused changes, the rows are still there as written', async () => {
    const [row] = await db().execute<{ quantity: string; n: number }>(sql`select quantity::text, (select count(*)::int from harvest_entries) as n from harvest_entries where id = ${entryId}`);
    expect(row).toEqual({ quantity: '1.000000', n: 1 });
  });

  it('given a second entry with the same idempotency key, it refuses it', async () => {
    const error = await refusal(db().insert(harvestEntries).values(entry('key-1')));
    expect(error).toMatchObject({ code: uniqueViolation, constraint_name: 'harvest_entries_idempotency_key_unique' });
  });

  it('given a permit held by both a person and a club, it refuses it', async () => {
    const error = await refusal(db().insert(permits).values({ parcelId, holderUserId: userId, holderClubId: clubId, startsOn: '2026-06-01', endsOn: '2026-09-30' }));
    expect(error).toMatchObject({ code: checkViolation, constraint_name: 'permits_one_holder' });
  });

  it('given a permit held by nobody, it refuses it', async () => {
    const error = await refusal(db().insert(permits).values({ parcelId, startsOn: '2026-06-01', endsOn: '2026-09-30' }));
    expect(error).toMatchObject({ code: checkViolation, constraint_name: 'permits_one_holder' });
  });

  it('given a permit held by a club alone, it accepts it', async () => {
    const rows = await db().insert(permits).values({ parcelId, holderClubId: clubId, startsOn: '2026-06-01', endsOn: '2026-09-30' }).returning({ id: permits.id });
    expect(rows).toHaveLength(1);
  });
});
