import { and, eq, sql } from 'drizzle-orm';
import pg from 'pg';
import type postgres from 'postgres';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, connect, createDb, type Db } from '../../src/db/client';
import { applyMigrations } from '../../src/db/migrations';
import { harvestedParcels, harvestEntries, harvestQuantities, harvestTotals, parcels, species, users } from '../../src/db/schema';
import { createThrowawayDatabase, migrationsFolder, one, type ThrowawayDatabase } from './throwaway-database';

/**
 * The app signs in as a role that owns nothing and holds only the grants of tallywood_app
 * (drizzle/0013_app_role.sql; the role is made by scripts/lib/setup.mjs). Connected as the test
 * run's DATABASE_URL, which is that role, each way around the append-only records and the kept
 * totals is refused. Every statement runs in a transaction that is then rolled back, so a bypass
 * that worked would still leave the shared test database as it was.
 */

// SQLSTATE codes, PostgreSQL 15 manual, Appendix A, Table A.1 (from memory ✱).
const insufficientPrivilege = '42501';
const invalidPassword = '28P01';
const restrictViolation = '23001';

/** The records (0002, 0007, 0010), each with a column to name in an UPDATE. */
const appendOnly = {
  harvest_entries: 'id',
  harvest_quantities: 'entry_id',
  permit_events: 'id',
  audit_events: 'id',
  flags: 'id',
  flag_notes: 'id',
} as const;
/** The tables kept by the trigger on harvest_quantities (0011). */
const keptByTrigger = { harvest_totals: 'total', harvested_parcels: 'parcel_id' } as const;

type Refusal = { code?: string; message: string };

class Accepted extends Error {}

/** What PostgreSQL answered `statement` on `client`, in a transaction rolled back either way; fails when it was accepted. */
async function refusal(client: postgres.Sql, statement: string): Promise<Refusal> {
  const outcome = await client
    .begin(async (tx) => {
      await tx.unsafe(statement);
      throw new Accepted(statement);
    })
    .catch((error: unknown) => error);
  if (outcome instanceof Accepted || !(outcome instanceof Error)) throw new Error(`the database accepted: ${statement}`);
  return outcome as Refusal;
}

let appUrl: string;
let app: Db;
const client = () => app.$client;

beforeAll(() => {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error('DATABASE_URL is not set');
  appUrl = url;
  app = createDb(url, { max: 1, hotMax: 1 });
});

afterAll(async () => {
  await closeDb(app);
});

describe('the role the app signs in as', () => {
  it('given the test run’s DATABASE_URL, it is tallywood_web: a member of tallywood_app alone, with no rights of its own', async () => {
    const [role] = await client()`
      select r.rolname, r.rolsuper, r.rolcreatedb, r.rolcreaterole, r.rolreplication, r.rolbypassrls, r.rolinherit,
        array(select g.rolname from pg_auth_members m join pg_roles g on g.oid = m.roleid where m.member = r.oid order by 1) as member_of
      from pg_roles r where r.rolname = current_user`;
    expect(role).toEqual({
      rolname: 'tallywood_web', rolsuper: false, rolcreatedb: false, rolcreaterole: false, rolreplication: false, rolbypassrls: false, rolinherit: true,
      member_of: ['tallywood_app'],
    });
  });

  it('given every database of the cluster, it owns nothing in any of them', async () => {
    // pg_shdepend records each object's owner, for every database (deptype 'o').
    const [row] = await client()`
      select count(*)::int as owned from pg_shdepend d join pg_roles r on r.oid = d.refobjid
      where d.refclassid = 'pg_authid'::regclass and d.deptype = 'o' and r.rolname in (current_user, 'tallywood_app')`;
    expect(row?.owned).toBe(0);
  });

  it('given no password, or a wrong one, it is refused: the role signs in only with its password, on loopback and through the socket', async () => {
    const overTcp = new URL(appUrl);
    overTcp.searchParams.delete('host');
    for (const way of [appUrl, overTcp.toString()]) {
      for (const password of ['', 'not-the-password']) {
        const url = new URL(way);
        url.password = password;
        const stranger = connect(url.toString(), { max: 1, onnotice: () => {}, connect_timeout: 10 });
        try {
          const error = await stranger`select 1`.then(
            () => null,
            (e: unknown) => e as Refusal,
          );
          expect(error, `${password === '' ? 'without a password' : 'with a wrong password'} at ${url.host}${url.search}`).toMatchObject({ code: invalidPassword });
        } finally {
          await stranger.end({ timeout: 5 });
        }
      }
    }
  });

  // inet_server_addr() is NULL on a connection through a Unix-domain socket (PostgreSQL 15 manual, §9.26, Table 9.65).
  it('given the test run’s DATABASE_URL, which names the cluster’s socket (scripts/lib/setup.mjs), both drivers connect through it', async () => {
    const socket = new URL(appUrl).searchParams.get('host');
    expect(socket, 'npm test starts the cluster with a socket in its directory; a checkout whose path makes it too long for unix(7) gets none').toMatch(/^\//);
    const [app] = await client()`select inet_server_addr()::text as address`;
    expect(app?.address).toBeNull();
    const queue = new pg.Client({ connectionString: appUrl });
    await queue.connect();
    try {
      const { rows } = await queue.query<{ address: string | null }>('select inet_server_addr()::text as address');
      expect(rows[0]?.address).toBeNull();
    } finally {
      await queue.end();
    }
    const overTcp = new URL(appUrl);
    overTcp.searchParams.delete('host');
    const tcp = connect(overTcp.toString(), { max: 1, onnotice: () => {} });
    try {
      const [row] = await tcp`select inet_server_addr()::text as address`;
      expect(row?.address).toBe('127.0.0.1/32');
    } finally {
      await tcp.end({ timeout: 5 });
    }
  });
});

describe('the records, as the app', () => {
  for (const [table, column] of Object.entries(appendOnly)) {
    it(`given ${table}, it refuses the app an UPDATE, a DELETE and a TRUNCATE`, async () => {
      for (const statement of [`update ${table} set ${column} = ${column} where false`, `delete from ${table} where false`, `truncate ${table}`]) {
        const error = await refusal(client(), statement);
        expect(error, statement).toMatchObject({ code: insufficientPrivilege });
        expect(error.message).toMatch(new RegExp(`permission denied for table ${table}`));
      }
    });
  }

  it('given check_ins, a record the app only appends to (0015), it refuses the app an UPDATE and a DELETE', async () => {
    for (const statement of ['update check_ins set accuracy_m = accuracy_m where false', 'delete from check_ins where false']) {
      const error = await refusal(client(), statement);
      expect(error, statement).toMatchObject({ code: insufficientPrivilege });
      expect(error.message).toMatch(/permission denied for table check_ins/);
    }
  });

  it('given the guard triggers, it refuses the app to disable or drop any of them', async () => {
    const triggers = await client()<{ table: string; name: string }[]>`
      select c.relname as table, t.tgname as name from pg_trigger t join pg_class c on c.oid = t.tgrelid
      where not t.tgisinternal and c.relname = any(${[...Object.keys(appendOnly), ...Object.keys(keptByTrigger)]}) order by 1, 2`;
    // A row trigger against UPDATE and DELETE and a TRUNCATE guard on each record; the totals' guards; the trigger that keeps them.
    expect(triggers.length).toBe(2 * Object.keys(appendOnly).length + Object.keys(keptByTrigger).length + 1);
    for (const { table, name } of triggers) {
      for (const statement of [`alter table ${table} disable trigger ${name}`, `alter table ${table} disable trigger all`, `drop trigger ${name} on ${table}`]) {
        expect(await refusal(client(), statement), statement).toMatchObject({ code: insufficientPrivilege });
      }
    }
  });

  it('given reminder_settings (0019), it lets the app keep, change, read and delete a person’s switches', async () => {
    const outcome = await client()
      .begin(async (tx) => {
        const [user] = await tx<{ id: string }[]>`select id from users order by id limit 1`;
        if (!user) throw new Error('the test database has no account');
        await tx`insert into reminder_settings (user_id, season_opening) values (${user.id}, false)`;
        await tx`update reminder_settings set permit_ending = false where user_id = ${user.id}`;
        const rows = await tx`select permit_ending, season_opening, closure_starting from reminder_settings where user_id = ${user.id}`;
        await tx`delete from reminder_settings where user_id = ${user.id}`;
        throw new Accepted(JSON.stringify(rows));
      })
      .catch((error: unknown) => error);
    if (!(outcome instanceof Accepted)) throw outcome;
    expect(JSON.parse(outcome.message)).toEqual([{ permit_ending: false, season_opening: false, closure_starting: true }]);
  });

  it('given any table, it refuses the app to alter it or make one', async () => {
    for (const statement of [
      'alter table users add column probe integer',
      'alter table harvest_entries drop constraint harvest_entries_idempotency_key_unique',
      'alter table harvest_entries owner to current_user',
      'create table public.probe (id integer)',
      'create table probe (id integer)',
      'create temporary table probe (id integer)',
    ]) {
      expect(await refusal(client(), statement), statement).toMatchObject({ code: insufficientPrivilege });
    }
  });

  it("given the job queue's schema (0017), it refuses the app to make or alter anything there, and lets it run create_queue, which makes the queue's table as its owner", async () => {
    for (const statement of [
      'create table pgboss.probe (id integer)',
      'alter table pgboss.job add column probe integer',
      'truncate pgboss.job',
      "create function pgboss.probe() returns integer language sql as 'select 1'",
    ]) {
      expect(await refusal(client(), statement), statement).toMatchObject({ code: insufficientPrivilege });
    }
    const [row] = await client()`
      select has_function_privilege('pgboss.create_queue(text, json)', 'execute') as may,
        (select prosecdef from pg_proc where oid = 'pgboss.create_queue(text, json)'::regprocedure) as as_owner`;
    expect(row).toEqual({ may: true, as_owner: true });
  });

  it('given the trigger that keeps the totals, it refuses the app to run it from a trigger of its own', async () => {
    const [row] = await client()`select has_function_privilege('add_to_harvest_totals()', 'execute') as may`;
    expect(row?.may).toBe(false);
    const error = await refusal(client(), 'create trigger probe after insert on permits for each row execute function add_to_harvest_totals()');
    expect(error).toMatchObject({ code: insufficientPrivilege });
  });

  it('given session_replication_role, which would skip every trigger, it refuses the app to set it', async () => {
    for (const statement of ['set session_replication_role = replica', 'set local session_replication_role = replica']) {
      const error = await refusal(client(), statement);
      expect(error, statement).toMatchObject({ code: insufficientPrivilege });
      expect(error.message).toMatch(/permission denied to set parameter "session_replication_role"/);
    }
  });
});

describe('the kept totals, as the app', () => {
  for (const [table, column] of Object.entries(keptByTrigger)) {
    it(`given ${table}, it refuses the app a direct INSERT, UPDATE, DELETE and TRUNCATE`, async () => {
      for (const statement of [
        `insert into ${table} select * from ${table} limit 1`,
        `update ${table} set ${column} = ${column}`,
        `delete from ${table}`,
        `truncate ${table}`,
      ]) {
        const error = await refusal(client(), statement);
        expect(error, statement).toMatchObject({ code: insufficientPrivilege });
        expect(error.message).toMatch(new RegExp(`permission denied for table ${table}`));
      }
    });
  }

  it('given an entry the app records, the trigger still adds it to the kept totals', async () => {
    const rolledBack = new Error('rolled back');
    const seen = await app
      .transaction(async (tx) => {
        const forager = (await one(tx.insert(users).values({ email: 'app-role@example.org', name: 'App Role', roles: ['forager', 'landowner'] }).returning({ id: users.id }))).id;
        const kind = (await one(
          tx.insert(species).values({ slug: 'app-role-test-chanterelle', scientificName: 'Cantharellus cibarius', commonName: 'Chanterelle', kind: 'mushroom', usualUnit: 'g', cautions: ['Test caution.'] }).returning({ id: species.id }),
        )).id;
        const square = { type: 'Polygon', coordinates: [[[-72.85, 43.95], [-72.849, 43.95], [-72.849, 43.951], [-72.85, 43.951], [-72.85, 43.95]]] };
        const parcel = (await one(tx.insert(parcels).values({ ownerId: forager, name: 'App Role Lot', boundary: square, areaM2: 8900, timeZone: 'America/New_York' }).returning({ id: parcels.id }))).id;
        const facts = { foragerId: forager, parcelId: parcel, speciesId: kind, method: 'pick' as const, localDate: '2026-07-15', countedOn: '2026-07-15', seasonStart: '2026-07-01', seasonEnd: '2026-08-31', recordedBy: forager };
        for (const [key, grams] of [['app-role-1', '12'], ['app-role-2', '30']] as const) {
          const entry = (await one(tx.insert(harvestEntries).values({ ...facts, idempotencyKey: key }).returning({ id: harvestEntries.id }))).id;
          await tx.insert(harvestQuantities).values({ entryId: entry, measure: 'mass', quantity: grams, unit: 'g', baseQuantity: grams });
        }
        const totals = await tx
          .select({ total: sql<string>`trim_scale(${harvestTotals.total})::text`, dayTotal: sql<string>`trim_scale(${harvestTotals.dayTotal})::text`, entries: harvestTotals.entries })
          .from(harvestTotals)
          .where(and(eq(harvestTotals.parcelId, parcel), eq(harvestTotals.speciesId, kind)));
        const harvested = await tx.select().from(harvestedParcels).where(eq(harvestedParcels.parcelId, parcel));
        throw Object.assign(rolledBack, { seen: { totals, harvested: harvested.length } });
      })
      .catch((error: unknown) => {
        if (error !== rolledBack) throw error;
        return (error as Error & { seen: unknown }).seen;
      });
    // 12 g + 30 g on one day, no visit, no permit: one row of 42 g, two entries.
    expect(seen).toEqual({ totals: [{ total: '42', dayTotal: '42', entries: 2 }], harvested: 1 });
  });
});

/**
 * The guards hold for a role that has every privilege too (the owner of the tables, here the
 * cluster's superuser on a database of its own): privileges keep the app out, the triggers keep
 * everyone out.
 */
describe('the guards, for the owner of the tables', () => {
  let throwaway: ThrowawayDatabase | undefined;
  let owner: postgres.Sql;

  beforeAll(async () => {
    throwaway = await createThrowawayDatabase('tallywood_app_role');
    await applyMigrations(throwaway.db, migrationsFolder);
    owner = throwaway.db.$client;
  });

  afterAll(async () => {
    await throwaway?.drop();
  });

  for (const table of Object.keys(appendOnly)) {
    it(`given ${table}, it refuses even the owner a TRUNCATE`, async () => {
      // CASCADE, so that a foreign key from another record does not stop it before the guard.
      const error = await refusal(owner, `truncate ${table} cascade`);
      expect(error).toMatchObject({ code: restrictViolation });
      expect(error.message).toMatch(/is append-only: TRUNCATE refused/);
    });
  }

  for (const [table, column] of Object.entries(keptByTrigger)) {
    it(`given ${table}, it refuses even the owner a write that does not come from its trigger`, async () => {
      for (const [operation, statement] of [
        ['INSERT', `insert into ${table} select * from ${table} limit 1`],
        ['UPDATE', `update ${table} set ${column} = ${column}`],
        ['DELETE', `delete from ${table}`],
        ['TRUNCATE', `truncate ${table}`],
      ] as const) {
        const error = await refusal(owner, statement);
        expect(error, statement).toMatchObject({ code: restrictViolation });
        expect(error.message).toBe(`${table} is kept by the trigger on harvest_quantities: a direct ${operation} refused`);
      }
    });
  }
});
