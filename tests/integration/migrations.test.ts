import { cpSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { is, sql } from 'drizzle-orm';
import { getTableConfig, PgTable } from 'drizzle-orm/pg-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { applyMigrations, migrationStatus, postgisVersion } from '../../src/db/migrations';
import * as schema from '../../src/db/schema';
import { clubs, harvestEntries, harvestQuantities, parcels, permitEvents, permits, species, users } from '../../src/db/schema';
import { createThrowawayDatabase, migrationsFolder, referenceBoundary, refusal, type ThrowawayDatabase } from './throwaway-database';

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
    localDate: '2026-07-15',
    countedOn: '2026-07-15',
    seasonStart: '2026-07-01',
    seasonEnd: '2026-08-31',
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
    // 1 US liquid quart = 946.352946 mL (REFERENCES §1 ⚙).
    await db().insert(harvestQuantities).values({ entryId: inserted.id, measure: 'volume', quantity: '1', unit: 'us-quart', baseQuantity: '946.352946' });
    eventId = event.id;
    entryId = inserted.id;
  });

  it('given a harvest entry, it refuses an UPDATE of it', async () => {
    const error = await refusal(db().execute(sql`update harvest_entries set method = 'cut' where id = ${entryId}`));
    expect(error.code).toBe(restrictViolation);
    expect(error.message).toMatch(/harvest_entries is append-only: UPDATE refused/);
  });

  it("given an entry's quantity, it refuses an UPDATE, a DELETE and a TRUNCATE of it", async () => {
    const update = await refusal(db().execute(sql`update harvest_quantities set quantity = 2 where entry_id = ${entryId}`));
    expect(update).toMatchObject({ code: restrictViolation, message: expect.stringMatching(/harvest_quantities is append-only: UPDATE refused/) });
    const remove = await refusal(db().execute(sql`delete from harvest_quantities where entry_id = ${entryId}`));
    expect(remove).toMatchObject({ code: restrictViolation, message: expect.stringMatching(/harvest_quantities is append-only: DELETE refused/) });
    const truncate = await refusal(db().execute(sql`truncate harvest_quantities`));
    expect(truncate.message).toMatch(/harvest_quantities is append-only: TRUNCATE refused/);
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
    const [row] = await db().execute<{ method: string; quantity: string; n: number; q: number }>(sql`
      select e.method::text, q.quantity::text, (select count(*)::int from harvest_entries) as n, (select count(*)::int from harvest_quantities) as q
      from harvest_entries e join harvest_quantities q on q.entry_id = e.id where e.id = ${entryId}`);
    expect(row).toEqual({ method: 'pick', quantity: '1.000000', n: 1, q: 1 });
  });

  it("given a second entry of the same forager with the same idempotency key, it refuses it; another forager's same key is theirs", async () => {
    const error = await refusal(db().insert(harvestEntries).values(entry('key-1')));
    expect(error).toMatchObject({ code: uniqueViolation, constraint_name: 'harvest_entries_forager_key' });
    const [other] = await db().insert(users).values({ email: 'other-keys@example.org', name: 'Other Keys', roles: ['forager'] }).returning();
    if (!other) throw new Error('fixture row was not inserted');
    const theirs = await db().insert(harvestEntries).values({ ...entry('key-1'), foragerId: other.id, recordedBy: other.id }).returning({ id: harvestEntries.id });
    expect(theirs).toHaveLength(1);
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

/*
 * The upgrade path: a database migrated to 0009, with a ledger recorded in the old schema (one row
 * per entry with quantity, unit, dimension and base_quantity; no stored counting facts), then
 * migrated to the end. 0010 must work out each entry's counting facts from the old rows, and 0011
 * the kept totals from those facts. Every expected value is worked by hand beside its check.
 */
describe('upgrading a ledger recorded before 0010', () => {
  let old: ThrowawayDatabase | undefined;
  let folder = '';
  let statusBefore: Awaited<ReturnType<typeof migrationStatus>>;
  const oldDb = () => {
    if (!old) throw new Error('the throwaway database was not created');
    return old.db;
  };
  const ids = { club: '', parcel: '', chaga: '', leek: '', permit: '', visitA: '', visitB: '', e1: '', c1: '', c2: '', e2: '', e3: '' };
  /** Names for the ids in a row, so that rows read by name. */
  const nameOf = (id: string | null) => (id === null ? null : (Object.entries(ids).find(([, value]) => value === id)?.[0] ?? id));
  const returnedId = async (query: ReturnType<typeof sql>) => {
    const [row] = await oldDb().execute<{ id: string }>(query);
    if (!row) throw new Error('the row was not inserted');
    return row.id;
  };

  beforeAll(async () => {
    // The migrations folder as it stood before 0010: every later migration left out of the folder and its journal.
    folder = mkdtempSync(join(tmpdir(), 'tallywood-migrations-'));
    cpSync(migrationsFolder, folder, { recursive: true });
    const later = (name: string) => /^\d{4}/.test(name) && name.slice(0, 4) >= '0010';
    for (const file of readdirSync(folder)) if (later(file)) rmSync(join(folder, file));
    for (const file of readdirSync(join(folder, 'meta'))) if (later(file)) rmSync(join(folder, 'meta', file));
    const journalPath = join(folder, 'meta', '_journal.json');
    const journal = JSON.parse(readFileSync(journalPath, 'utf8')) as { entries: { tag: string }[] };
    journal.entries = journal.entries.filter((e) => !later(e.tag));
    writeFileSync(journalPath, JSON.stringify(journal, null, 2));
    expect(journal.entries.map((e) => e.tag.slice(0, 4))).toEqual(['0000', '0001', '0002', '0003', '0004', '0005', '0006', '0007', '0008', '0009']);

    old = await createThrowawayDatabase('tallywood_upgrade');
    await applyMigrations(old.db, folder);

    // The old schema, in raw SQL.
    await oldDb().execute(sql`insert into users (id, email, name, roles) values
      ('upgrade-owner', 'owner@upgrade.test', 'Olive Owner', '{forager,landowner}'), ('upgrade-ada', 'ada@upgrade.test', 'Ada Member', '{forager}')`);
    ids.club = await returnedId(sql`insert into clubs (slug, name) values ('upgrade-club', 'Upgrade Club') returning id`);
    // 876 163.448 m²: the REFERENCES §2 ring (GeographicLib ⚙).
    ids.parcel = await returnedId(sql`insert into parcels (owner_id, name, status, boundary, area_m2, time_zone)
      values ('upgrade-owner', 'Upgrade Hollow', 'listed', ST_SetSRID(ST_GeomFromGeoJSON(${JSON.stringify(referenceBoundary)}), 4326), 876163.448, 'America/New_York') returning id`);
    ids.chaga = await returnedId(sql`insert into species (slug, scientific_name, common_name, kind, usual_unit) values ('chaga-upgrade', 'Inonotus obliquus', 'Chaga', 'mushroom', 'g') returning id`);
    ids.leek = await returnedId(sql`insert into species (slug, scientific_name, common_name, kind, usual_unit) values ('leek-upgrade', 'Allium tricoccum', 'Wild leek', 'leaf', 'plant') returning id`);
    // Chaga: two windows that overlap in June. Wild leek has no allowance.
    const allowance = await returnedId(sql`insert into allowances (parcel_id, species_id, seasons, methods)
      values (${ids.parcel}, ${ids.chaga}, '[{"start": "04-15", "end": "06-30"}, {"start": "06-01", "end": "07-31"}]', '{cut}') returning id`);
    await oldDb().execute(sql`insert into limits (allowance_id, scope, quantity, unit) values (${allowance}, 'season', 2, 'lb'), (${allowance}, 'day', 1, 'kg')`);
    ids.permit = await returnedId(sql`insert into permits (parcel_id, holder_club_id, state, starts_on, ends_on) values (${ids.parcel}, ${ids.club}, 'active', '2025-01-01', '2025-12-31') returning id`);
    // Two visits of Ada's left open: the old schema allowed it.
    ids.visitA = await returnedId(sql`insert into visits (forager_id, parcel_id, permit_id, local_date, started_at) values ('upgrade-ada', ${ids.parcel}, ${ids.permit}, '2025-06-15', '2025-06-15T14:00:00Z') returning id`);
    ids.visitB = await returnedId(sql`insert into visits (forager_id, parcel_id, permit_id, local_date, started_at) values ('upgrade-ada', ${ids.parcel}, ${ids.permit}, '2025-06-20', '2025-06-20T14:00:00Z') returning id`);
    const entry = (values: { key: string; species: string; method: string; permit: string | null; visit: string | null; quantity: string; unit: string; dimension: string; base: string; localDate: string; corrects?: string; breach?: boolean }) =>
      returnedId(sql`insert into harvest_entries (idempotency_key, forager_id, parcel_id, permit_id, visit_id, species_id, method, quantity, unit, dimension, base_quantity,
          local_date, breach, acknowledged_over, corrects_entry_id, correction_reason, recorded_by, created_at)
        values (${values.key}, 'upgrade-ada', ${ids.parcel}, ${values.permit}, ${values.visit}, ${values.species}, ${values.method}, ${values.quantity}, ${values.unit}, ${values.dimension}, ${values.base},
          ${values.localDate}, ${values.breach ?? false}, ${values.breach ?? false}, ${values.corrects ?? null}, ${values.corrects ? 'Weighed again' : null}, 'upgrade-ada', ${`${values.localDate}T16:00:00Z`})
        returning id`);
    // 1 lb = 453.59237 g (REFERENCES §1, 1959 agreement), recorded as an acknowledged breach so that the breach count is carried over.
    ids.e1 = await entry({ key: 'old-e1', species: ids.chaga, method: 'cut', permit: ids.permit, visit: ids.visitA, quantity: '1', unit: 'lb', dimension: 'mass', base: '453.59237', localDate: '2025-06-15', breach: true });
    // Corrected five days later in visit B without a permit on the row: −8 oz = −8 × 28.349523125 = −226.796185 g (REFERENCES §1 ⚙).
    ids.c1 = await entry({ key: 'old-c1', species: ids.chaga, method: 'cut', permit: null, visit: ids.visitB, quantity: '-8', unit: 'oz', dimension: 'mass', base: '-226.796185', localDate: '2025-06-20', corrects: ids.e1 });
    // The correction corrected on 10 August, after the season closed (no window holds the day): +2 oz = 56.69904625 g.
    ids.c2 = await entry({ key: 'old-c2', species: ids.chaga, method: 'cut', permit: null, visit: null, quantity: '2', unit: 'oz', dimension: 'mass', base: '56.69904625', localDate: '2025-08-10', corrects: ids.c1 });
    // Wild leek in visit A beside the chaga: a visit's totals are per species and measure.
    ids.e2 = await entry({ key: 'old-e2', species: ids.leek, method: 'dig', permit: ids.permit, visit: ids.visitA, quantity: '3', unit: 'plant', dimension: 'count', base: '3', localDate: '2025-06-15' });
    // Chaga on 20 July, a day only the second window holds, with no visit: 0.25 kg = 250 g.
    ids.e3 = await entry({ key: 'old-e3', species: ids.chaga, method: 'cut', permit: ids.permit, visit: null, quantity: '0.25', unit: 'kg', dimension: 'mass', base: '250', localDate: '2025-07-20' });

    statusBefore = await migrationStatus(oldDb());
    await applyMigrations(oldDb(), migrationsFolder);
  });

  afterAll(async () => {
    await old?.drop();
    if (folder) rmSync(folder, { recursive: true, force: true });
  });

  it('given a database at 0009, it was behind by the later migrations, and is up to date after them', async () => {
    expect(statusBefore).toMatchObject({ applied: 10, upToDate: false });
    expect(await migrationStatus(oldDb())).toMatchObject({ upToDate: true });
  });

  it('given the old entries, each has its quantity in harvest_quantities under the measure of its unit', async () => {
    const rows = await oldDb().execute<{ entry: string; measure: string; quantity: string; unit: string; base: string }>(sql`
      select e.idempotency_key as entry, q.measure::text, trim_scale(q.quantity)::text as quantity, q.unit::text, trim_scale(q.base_quantity)::text as base
      from harvest_quantities q join harvest_entries e on e.id = q.entry_id order by e.idempotency_key, q.measure`);
    // lb, oz and kg measure mass; a plant, plants (src/lib/units.ts; the old dimension was 'count').
    expect([...rows]).toEqual([
      { entry: 'old-c1', measure: 'mass', quantity: '-8', unit: 'oz', base: '-226.796185' },
      { entry: 'old-c2', measure: 'mass', quantity: '2', unit: 'oz', base: '56.69904625' },
      { entry: 'old-e1', measure: 'mass', quantity: '1', unit: 'lb', base: '453.59237' },
      { entry: 'old-e2', measure: 'plants', quantity: '3', unit: 'plant', base: '3' },
      { entry: 'old-e3', measure: 'mass', quantity: '0.25', unit: 'kg', base: '250' },
    ]);
  });

  it("given a correction and a correction of it, each counts where the first entry did: its root, day, visit, permit, club and season occurrence", async () => {
    const rows = await oldDb().execute<{ id: string; local_date: string; visit_id: string | null; root_entry_id: string | null; counted_on: string; counted_visit_id: string | null; permit_id: string | null; club_id: string | null; season_start: string; season_end: string }>(sql`
      select id, local_date::text, visit_id, root_entry_id, counted_on::text, counted_visit_id, permit_id, club_id, season_start::text, season_end::text
      from harvest_entries order by idempotency_key`);
    const named = rows.map((r) => ({
      entry: nameOf(r.id), localDate: r.local_date, visit: nameOf(r.visit_id), root: nameOf(r.root_entry_id), countedOn: r.counted_on, countedVisit: nameOf(r.counted_visit_id),
      permit: nameOf(r.permit_id), club: nameOf(r.club_id), season: `${r.season_start}…${r.season_end}`,
    }));
    // Chaga's windows overlap, so its season is 15 Apr – 31 Jul 2025 on any day of it: on 15 June (both windows hold
    // it) and on 20 July (only the second does). The corrections keep the day and visit they were recorded in, and
    // count on e1's day, visit, permit (the club's) and season, even the one recorded on 10 August, after it closed
    // (counted by its own day, no window would hold it and it would fall into the calendar year). Wild leek has no allowance: its entry counts in its
    // calendar year (0010's fallback).
    expect(named).toEqual([
      { entry: 'c1', localDate: '2025-06-20', visit: 'visitB', root: 'e1', countedOn: '2025-06-15', countedVisit: 'visitA', permit: 'permit', club: 'club', season: '2025-04-15…2025-07-31' },
      { entry: 'c2', localDate: '2025-08-10', visit: null, root: 'e1', countedOn: '2025-06-15', countedVisit: 'visitA', permit: 'permit', club: 'club', season: '2025-04-15…2025-07-31' },
      { entry: 'e1', localDate: '2025-06-15', visit: 'visitA', root: null, countedOn: '2025-06-15', countedVisit: 'visitA', permit: 'permit', club: 'club', season: '2025-04-15…2025-07-31' },
      { entry: 'e2', localDate: '2025-06-15', visit: 'visitA', root: null, countedOn: '2025-06-15', countedVisit: 'visitA', permit: 'permit', club: 'club', season: '2025-01-01…2025-12-31' },
      { entry: 'e3', localDate: '2025-07-20', visit: null, root: null, countedOn: '2025-07-20', countedVisit: null, permit: 'permit', club: 'club', season: '2025-04-15…2025-07-31' },
    ]);
  });

  it('given the upgraded ledger, harvest_totals holds the hand-worked sums', async () => {
    const rows = await oldDb().execute<Record<string, string | number | null>>(sql`
      select species_id, measure::text, season_start::text, season_end::text, forager_id, counted_on::text, visit_id, permit_id, club_id,
        trim_scale(total)::text as total, trim_scale(day_total)::text as day_total, trim_scale(permit_day_total)::text as permit_day_total,
        trim_scale(visit_total)::text as visit_total, entries, breaches
      from harvest_totals order by measure, counted_on`);
    const named = rows.map((r) => ({ ...r, species_id: nameOf(r.species_id as string), visit_id: nameOf(r.visit_id as string), permit_id: nameOf(r.permit_id as string), club_id: nameOf(r.club_id as string) }));
    // Chaga: 453.59237 − 226.796185 + 56.69904625 = 283.49523125 g (= 16 − 8 + 2 = 10 oz × 28.349523125 g), all on
    // (2025-06-15, visit A); one entry that adds (corrections are not entries), one breach. Then 250 g on 2025-07-20,
    // in no visit (no visit total), in the same season. Wild leek: 3 plants in visit A, its visit total its own.
    expect(named).toEqual([
      { species_id: 'chaga', measure: 'mass', season_start: '2025-04-15', season_end: '2025-07-31', forager_id: 'upgrade-ada', counted_on: '2025-06-15', visit_id: 'visitA', permit_id: 'permit', club_id: 'club',
        total: '283.49523125', day_total: '283.49523125', permit_day_total: '283.49523125', visit_total: '283.49523125', entries: 1, breaches: 1 },
      { species_id: 'chaga', measure: 'mass', season_start: '2025-04-15', season_end: '2025-07-31', forager_id: 'upgrade-ada', counted_on: '2025-07-20', visit_id: null, permit_id: 'permit', club_id: 'club',
        total: '250', day_total: '250', permit_day_total: '250', visit_total: null, entries: 1, breaches: 0 },
      { species_id: 'leek', measure: 'plants', season_start: '2025-01-01', season_end: '2025-12-31', forager_id: 'upgrade-ada', counted_on: '2025-06-15', visit_id: 'visitA', permit_id: 'permit', club_id: 'club',
        total: '3', day_total: '3', permit_day_total: '3', visit_total: '3', entries: 1, breaches: 0 },
    ]);
  });

  it('given two visits of one forager left open, it ends the earlier at its local midnight and leaves one open, and visits_one_open refuses a second', async () => {
    const rows = await oldDb().execute<{ id: string; ended_at: string | null; ended_by: string | null }>(sql`
      select id, to_char(ended_at at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS"Z"') as ended_at, ended_by::text from visits order by started_at`);
    // Visit A's day, 2025-06-15, ends at local midnight: 2025-06-16 00:00 EDT (UTC−4 in June, REFERENCES §6) = 04:00 UTC,
    // earlier than any run of this test, so the migration's least(now(), midnight) is the midnight.
    expect(rows.map((r) => [nameOf(r.id), r.ended_at, r.ended_by])).toEqual([
      ['visitA', '2025-06-16T04:00:00Z', 'end-of-day'],
      ['visitB', null, null],
    ]);
    const error = await refusal(oldDb().execute(sql`insert into visits (forager_id, parcel_id, local_date) values ('upgrade-ada', ${ids.parcel}, '2025-06-21')`));
    expect(error).toMatchObject({ code: uniqueViolation, constraint_name: 'visits_one_open' });
  });
});
