import { PgDialect } from 'drizzle-orm/pg-core';
import type { SQL } from 'drizzle-orm';
import type postgres from 'postgres';
import { connect } from '../../src/db/client';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { actorBySessionQuery } from '../../src/db/accounts.queries';
import { measuredCandidatesQuery, parcelFactsNearQuery, sharedFactsQuery, usageQuery } from '../../src/db/field.queries';
import type { UsageWindow } from '../../src/lib/field/counting';

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
  sql = connect(url, { max: 1, onnotice: () => {} });
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

  it("finds the check-in's candidates, measured, through the same index, and reads the shared facts of those not kept by their primary key", async () => {
    const candidates = await genericPlan('candidates', measuredCandidatesQuery({ longitude: -72.1, latitude: 43.2, radiusM: 10, forager }));
    expect(candidates).toMatch(/Index Scan using parcels_boundary_geog_gist on parcels p\n\s+Index Cond: \(\(boundary\)::geography && _st_expand\(/);
    expect(candidates).not.toMatch(/Seq Scan on parcels\b/);
    const shared = await genericPlan('shared_facts', sharedFactsQuery(['00000000-0000-4000-8000-000000000002', '00000000-0000-4000-8000-000000000005']));
    expect(shared).toMatch(/(Index Scan using parcels_pkey on parcels p|Bitmap Index Scan on parcels_pkey)\n\s+Index Cond: \(id = ANY \(\$1\)\)/);
    expect(shared).not.toMatch(/Seq Scan on parcels\b/);
  });

  it('finds the session by its key and the person by theirs', async () => {
    const plan = await genericPlan('actor_by_session', actorBySessionQuery({ sessionToken: 'token', now: new Date('2026-06-01T12:00:00Z') }));
    expect(plan).toMatch(/Index Scan using sessions_pkey on sessions s\n\s+Index Cond: \(session_token = \$\d+\)/);
    expect(plan).toMatch(/Index Scan using users_pkey on users u\n\s+Index Cond: \(id = \$\d+\)/);
    expect(plan).not.toMatch(/Seq Scan on (users|sessions)\b/);
  });

  it('sums what the forager has taken from harvest_totals through its indexes, never a scan of the kept totals or of visits', async () => {
    // Made-up ids: a generic plan is made without the values. One window asks for the open visit, one names a visit.
    const window = { parcelId: '00000000-0000-4000-8000-000000000002', speciesId: '00000000-0000-4000-8000-000000000003', measure: 'mass', seasonStart: '2026-04-15', seasonEnd: '2026-07-31', day: '2026-06-01' } as const;
    const windows: UsageWindow[] = [{ ...window, visit: 'open' }, { ...window, measure: 'plants', visit: '00000000-0000-4000-8000-000000000004' }];
    const plan = await genericPlan('usage', usageQuery({ forager, windows }));
    // The visit, day, season, parcel-season and club-season sums: five reads of the kept totals, each through an index.
    expect(plan.match(/(Index|Index Only|Bitmap Index) Scan (using|on) harvest_totals_\w+/g) ?? []).toHaveLength(5);
    expect(plan).not.toMatch(/Seq Scan on (harvest_totals|visits)\b/);
    // The visit's sum by the visit index; the day's by the key, down to the forager and the day.
    expect(plan).toMatch(/Index Scan using harvest_totals_visit on harvest_totals t\w*\n\s+Index Cond: \(visit_id = /);
    expect(plan).toMatch(/Index (Only )?Scan using harvest_totals_key on harvest_totals t\w*\n\s+Index Cond: \(.*\(forager_id = \$\d+\) AND \(counted_on = w\.day\)\)/);
    // The open visit is found through the one-open-visit index.
    expect(plan).toMatch(/Index Scan using visits_one_open on visits v\n\s+Index Cond: \(forager_id = \$\d+\)/);
  });
});
