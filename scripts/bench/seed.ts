import { randomUUID } from 'node:crypto';
import type { Sql } from 'postgres';
import { parcelName, syntheticParcel } from './parcels';

export const benchForagerEmail = 'bench-forager@bench.invalid';
const landownerCount = 1000;
/** Members of the bench club, each an HTTP client of its own: one person does not check in eight times at once. */
export const benchMemberCount = 32;
const benchClubSlug = 'bench-club';
const memberId = (n: number) => `bench-member-${String(n).padStart(2, '0')}`;
const batchSize = 2000;
/**
 * A PostgreSQL array literal of text (PostgreSQL manual §8.15.6: elements double-quoted, with
 * backslash and quote escaped), sent as one text parameter and cast in SQL. postgres.js's own
 * sql.array() needs the array types fetched first, which a fresh pool has not done yet.
 */
const textArray = (values: readonly string[]) => `{${values.map((v) => `"${v.replace(/\\/g, '\\\\').replace(/"/g, '\\"')}"`).join(',')}}`;

const landownerId = (n: number) => `bench-landowner-${String(n).padStart(4, '0')}`;

export type SeedResult = { seeded: number; existing: number; ms: number; foragerId: string };

/** The people and species every bench parcel refers to; left alone when already there. */
async function ensureBase(sql: Sql) {
  const ids = Array.from({ length: landownerCount }, (_, n) => landownerId(n));
  await sql`
    insert into users (id, email, name, roles, landowner_verified_at)
    select id, id || '@bench.invalid', 'Bench landowner ' || id, '{forager,landowner}'::role[], now()
    from unnest(${textArray(ids)}::text[]) as t(id)
    on conflict do nothing`;
  await sql`insert into users (id, email, name, roles) values ('bench-forager', ${benchForagerEmail}, 'Bench forager', '{forager}'::role[]) on conflict do nothing`;
  await sql`
    insert into species (slug, scientific_name, common_name, kind, usual_unit, usual_methods)
    values ('bench-chanterelle', 'Cantharellus cibarius', 'Golden chanterelle (bench)', 'mushroom', 'g', '{pick}'::method[])
    on conflict do nothing`;
  await sql`insert into clubs (slug, name) values (${benchClubSlug}, 'Bench club') on conflict do nothing`;
  const members = Array.from({ length: benchMemberCount }, (_, n) => memberId(n));
  await sql`
    insert into users (id, email, name, roles)
    select id, id || '@bench.invalid', 'Bench member ' || id, '{forager}'::role[] from unnest(${textArray(members)}::text[]) as t(id)
    on conflict do nothing`;
  await sql`
    insert into club_memberships (club_id, user_id, role, state, joined_at)
    select c.id, t.id, 'member', 'active', now() from clubs c, unnest(${textArray(members)}::text[]) as t(id) where c.slug = ${benchClubSlug}
    on conflict do nothing`;
  // The bench's people are load, not readers: each may use every bench parcel, so their reminders would be
  // thousands of e-mails a day and the reminders job minutes of the app's CPU, which the check-in figures
  // would then measure. They switch every reminder off, as a person can on /settings.
  await sql`
    insert into reminder_settings (user_id, permit_ending, season_opening, closure_starting, weekly_digest)
    select id, false, false, false, false from users where email like '%@bench.invalid'
    on conflict (user_id) do update set permit_ending = false, season_opening = false, closure_starting = false, weekly_digest = false`;
  const [forager] = await sql<{ id: string }[]>`select id from users where email = ${benchForagerEmail}`;
  const [species] = await sql<{ id: string }[]>`select id from species where slug = 'bench-chanterelle'`;
  const [club] = await sql<{ id: string }[]>`select id from clubs where slug = ${benchClubSlug}`;
  if (!forager || !species || !club) throw new Error('the bench forager, club or species is missing');
  return { foragerId: forager.id, speciesId: species.id, clubId: club.id };
}

/** One batch: parcels, one year-round allowance with a daily limit each, an active permit each for the forager and for the club. */
async function insertBatch(sql: Sql, { from, to, foragerId, speciesId, clubId }: { from: number; to: number; foragerId: string; speciesId: string; clubId: string }) {
  const parcelIds: string[] = [];
  const owners: string[] = [];
  const names: string[] = [];
  const geometries: string[] = [];
  const allowanceIds: string[] = [];
  for (let i = from; i < to; i += 1) {
    parcelIds.push(randomUUID());
    allowanceIds.push(randomUUID());
    owners.push(landownerId(i % landownerCount));
    names.push(parcelName(i));
    geometries.push(JSON.stringify({ type: 'MultiPolygon', coordinates: syntheticParcel(i).coordinates }));
  }
  const parcelArray = textArray(parcelIds);
  const allowanceArray = textArray(allowanceIds);
  await sql.begin(async (tx) => {
    await tx`
      insert into parcels (id, owner_id, name, status, boundary, area_m2, time_zone, open_to_requests)
      select t.id, t.owner_id, t.name, 'listed'::parcel_status, g.geom, ST_Area(g.geom::geography), 'America/New_York', true
      from unnest(${parcelArray}::uuid[], ${textArray(owners)}::text[], ${textArray(names)}::text[], ${textArray(geometries)}::text[])
        as t(id, owner_id, name, geojson)
      cross join lateral (select ST_Multi(ST_SetSRID(ST_GeomFromGeoJSON(t.geojson), 4326)) as geom) g`;
    await tx`
      insert into allowances (id, parcel_id, species_id, seasons, methods)
      select a.id, a.parcel_id, ${speciesId}::uuid, '[{"start":"01-01","end":"12-31"}]'::jsonb, '{pick}'::method[]
      from unnest(${allowanceArray}::uuid[], ${parcelArray}::uuid[]) as a(id, parcel_id)`;
    await tx`
      insert into limits (allowance_id, scope, quantity, unit)
      select id, 'day'::limit_scope, 2::numeric, 'kg'::unit from unnest(${allowanceArray}::uuid[]) as a(id)`;
    await tx`
      insert into permits (parcel_id, holder_user_id, state, starts_on, ends_on)
      select id, ${foragerId}::text, 'active'::permit_state, '2020-01-01'::date, '2099-12-31'::date from unnest(${parcelArray}::uuid[]) as p(id)`;
    await tx`
      insert into permits (parcel_id, holder_club_id, state, starts_on, ends_on)
      select id, ${clubId}::uuid, 'active'::permit_state, '2020-01-01'::date, '2099-12-31'::date from unnest(${parcelArray}::uuid[]) as p(id)`;
  });
}

/** Bench databases seeded before the club existed: its permits on every bench parcel that lacks one. */
async function topUpClubPermits(sql: Sql, clubId: string) {
  const added = await sql`
    insert into permits (parcel_id, holder_club_id, state, starts_on, ends_on)
    select p.id, ${clubId}::uuid, 'active'::permit_state, '2020-01-01'::date, '2099-12-31'::date from parcels p
    where p.name like 'Bench parcel %' and not exists (select 1 from permits x where x.parcel_id = p.id and x.holder_club_id = ${clubId}::uuid)`;
  return added.count;
}

/**
 * Seeds bench parcels next…target−1, where `next` is one past the highest bench parcel present,
 * then ANALYZEs. A re-run with the parcels in place seeds nothing. Two batches are in flight at a
 * time: the next one is generated while PostgreSQL writes the previous one.
 */
export async function seedBench(sql: Sql, target: number, log: (line: string) => void): Promise<SeedResult> {
  const started = performance.now();
  const { foragerId, speciesId, clubId } = await ensureBase(sql);
  const [row] = await sql<{ next: number }[]>`
    select coalesce(max(substring(name from 14)::int) + 1, 0)::int as next from parcels where name like 'Bench parcel %'`;
  const existing = row?.next ?? 0;
  if (existing < target) {
    log(`seeding bench parcels ${existing}…${target - 1} in batches of ${batchSize}…`);
    let inFlight: Promise<void> | null = null;
    for (let from = existing; from < target; from += batchSize) {
      const batch = insertBatch(sql, { from, to: Math.min(target, from + batchSize), foragerId, speciesId, clubId });
      await inFlight;
      inFlight = batch;
      if (from > existing && (from - existing) % (batchSize * 10) === 0) log(`  ${from} parcels (${(performance.now() - started) / 1000} s)`);
    }
    await inFlight;
  }
  const toppedUp = await topUpClubPermits(sql, clubId);
  if (toppedUp > 0) log(`added the bench club's permit on ${toppedUp} parcels`);
  if (existing < target || toppedUp > 0) await sql`analyze`;
  return { seeded: Math.max(0, target - existing), existing, ms: performance.now() - started, foragerId };
}

export type ParcelFigures = { parcels: number; meanVertices: number; withHole: number; multi: number; meanHa: number; minHa: number; maxHa: number; coverage: number; invalid: number };

/** What is in the database, not what the generator meant: vertex counts include each ring's closing position. */
export async function describeParcels(sql: Sql, regionKm2: number): Promise<ParcelFigures> {
  const [row] = await sql<{ parcels: number; mean_vertices: number; with_hole: number; multi: number; mean_ha: number; min_ha: number; max_ha: number; total_km2: number; invalid: number }[]>`
    select count(*)::int as parcels, avg(ST_NPoints(boundary))::float8 as mean_vertices,
      count(*) filter (where ST_NRings(boundary) > ST_NumGeometries(boundary))::int as with_hole,
      count(*) filter (where ST_NumGeometries(boundary) > 1)::int as multi,
      avg(area_m2 / 1e4)::float8 as mean_ha, min(area_m2 / 1e4)::float8 as min_ha, max(area_m2 / 1e4)::float8 as max_ha,
      (sum(area_m2) / 1e6)::float8 as total_km2,
      count(*) filter (where not ST_IsValid(boundary))::int as invalid
    from parcels`;
  if (!row) throw new Error('no parcels');
  return {
    parcels: row.parcels,
    meanVertices: row.mean_vertices,
    withHole: row.with_hole,
    multi: row.multi,
    meanHa: row.mean_ha,
    minHa: row.min_ha,
    maxHa: row.max_ha,
    coverage: row.total_km2 / regionKm2,
    invalid: row.invalid,
  };
}

/**
 * A fresh session for each bench club member (one per HTTP client), and a clean slate of their
 * visits and check-ins so that runs compare.
 */
export async function prepareMembers(sql: Sql, count: number): Promise<string[]> {
  if (count > benchMemberCount) throw new Error(`at most ${benchMemberCount} concurrent clients (one bench member each)`);
  const ids = Array.from({ length: count }, (_, n) => memberId(n));
  const tokens = ids.map(() => `bench-${randomUUID()}`);
  const members = textArray(ids);
  await sql`delete from sessions where user_id = any(${members}::text[])`;
  await sql`
    insert into sessions (session_token, user_id, expires)
    select t.token, t.id, now() + interval '1 day' from unnest(${textArray(tokens)}::text[], ${members}::text[]) as t(token, id)`;
  await sql`delete from check_ins where forager_id = any(${members}::text[])`;
  // Only visits nothing refers to, found by anti-joins that read check_ins and the ledger once. The
  // foreign keys' own checks would look each deleted visit up in both, and neither has an index on
  // visit_id: with the audit's million entries that is a scan of the ledger per visit (minutes).
  // The anti-joins already prove what those checks would, so they are skipped for this statement
  // (session_replication_role = replica skips foreign-key triggers; the bench connects as the
  // cluster's superuser). Nothing else writes to the bench database meanwhile.
  await sql.begin(async (tx) => {
    await tx`set local session_replication_role = replica`;
    await tx`
      delete from visits v where v.forager_id = any(${members}::text[])
        and not exists (select 1 from harvest_entries e where e.visit_id = v.id)
        and not exists (select 1 from harvest_entries e where e.counted_visit_id = v.id)
        and not exists (select 1 from check_ins c where c.visit_id = v.id)`;
  });
  return tokens;
}

/**
 * Loads the parcels, their indexes and what a check-in reads by key into PostgreSQL's buffers
 * (pg_prewarm, shipped with PostgreSQL), so that every measurement sees the steady state of a
 * server that has been answering for a while rather than the first reads from disk.
 */
export async function prewarm(sql: Sql): Promise<number> {
  await sql`create extension if not exists pg_prewarm`;
  const relations = ['parcels', 'parcels_boundary_gist', 'parcels_boundary_geog_gist', 'permits', 'permits_parcel', 'allowances', 'allowances_parcel_species', 'limits', 'limits_one_per_scope_and_measure', 'species'];
  const [row] = await sql<{ blocks: number }[]>`select sum(pg_prewarm(r::regclass))::int as blocks from unnest(${textArray(relations)}::text[]) as t(r)`;
  return row?.blocks ?? 0;
}
