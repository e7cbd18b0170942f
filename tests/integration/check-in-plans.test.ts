import { PgDialect } from 'drizzle-orm/pg-core';
import type { SQL } from 'drizzle-orm';
import postgres from 'postgres';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { actorBySessionQuery } from '../../src/db/accounts.queries';
import { checkInRecordQuery } from '../../src/db/field.commands';
import { parcelFactsNearQuery } from '../../src/db/field.queries';
import type { CheckInAnswer } from '../../src/lib/field/types';

/**
 * The check-in statements run with generic plans (src/db/client.ts), planned once per connection
 * without their values. These tests PREPARE each statement as the app sends it, force the generic
 * plan (plan_cache_mode, PostgreSQL manual §20.7.2) and read EXPLAIN EXECUTE: the plan must reach
 * its rows through the indexes whatever the values turn out to be. The demo tables are small, so
 * sequential scans are priced out (enable_seqscan = off): a plan that cannot use an index keeps
 * its scan anyway, and the assertion fails.
 */
const dialect = new PgDialect();
let sql: postgres.Sql;

beforeAll(() => {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error('DATABASE_URL is not set');
  sql = postgres(url, { max: 1, onnotice: () => {} });
});

afterAll(async () => {
  await sql.end({ timeout: 5 });
});

/** A parameter as an SQL literal for EXECUTE: quoted text (typed by the statement), or NULL. */
const literal = (value: unknown) => (value === null || value === undefined ? 'NULL' : `'${String(value).replace(/'/g, "''")}'`);

async function genericPlan(name: string, query: SQL): Promise<string> {
  const { sql: text, params } = dialect.sqlToQuery(query);
  return sql.begin(async (tx) => {
    await tx.unsafe('set local plan_cache_mode = force_generic_plan');
    await tx.unsafe('set local enable_seqscan = off');
    await tx.unsafe(`prepare ${name} as ${text}`);
    const rows = await tx.unsafe(`explain (costs off) execute ${name}(${params.map(literal).join(', ')})`);
    await tx.unsafe(`deallocate ${name}`);
    const plan = rows.map((r) => String((r as Record<string, unknown>)["QUERY PLAN"])).join("\n");
    if (process.env.SHOW_PLANS) console.log(plan);
    return plan;
  });
}

const forager = { id: 'demo-forager', clubIds: ['00000000-0000-4000-8000-000000000001'] };

describe('generic plans of the check-in statements', () => {
  it('finds candidate parcels through the GiST index on the geography of their boundary (PostGIS manual: ST_DWithin uses the index)', async () => {
    const plan = await genericPlan('facts_near', parcelFactsNearQuery({ longitude: -72.1, latitude: 43.2, radiusM: 10, forager }));
    expect(plan).toMatch(/Index Scan using parcels_boundary_geog_gist on parcels p\n\s+Index Cond: \(\(boundary\)::geography && _st_expand\(/);
    expect(plan).not.toMatch(/Seq Scan on parcels\b/);
  });

  it('finds the session by its key and the person by theirs', async () => {
    const plan = await genericPlan('actor_by_session', actorBySessionQuery({ sessionToken: 'token', now: new Date('2026-06-01T12:00:00Z') }));
    expect(plan).toMatch(/Index Scan using sessions_pkey on sessions s\n\s+Index Cond: \(session_token = \$\d+\)/);
    expect(plan).toMatch(/Index Scan using users_pkey on users u\n\s+Index Cond: \(id = \$\d+\)/);
    expect(plan).not.toMatch(/Seq Scan on (users|sessions)\b/);
  });

  it('reads and writes visits through the open-visits index, never a scan of all visits or parcels', async () => {
    const first = { verdict: 'clear', localDate: '2026-06-01', permitId: null, parcel: { id: '00000000-0000-4000-8000-000000000002', name: 'x', timeZone: 'UTC' } } as unknown as CheckInAnswer;
    const plan = await genericPlan(
      'check_in_record',
      checkInRecordQuery({ forager, position: [-72.1, 43.2], accuracyM: 5, instant: '2026-06-01T12:00:00.000Z', clearId: first.parcel?.id ?? null, first }),
    );
    expect(plan).toMatch(/Index Scan using visits_open on visits x\n\s+Index Cond: \(forager_id = \$\d+\)/);
    expect(plan).not.toMatch(/Seq Scan on (visits|parcels)\b/);
  });
});
