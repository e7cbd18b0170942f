import { randomUUID } from 'node:crypto';
import type { Sql } from 'postgres';
import { parcelName, syntheticParcel } from './parcels';

export const benchForagerEmail = 'bench-forager@bench.invalid';
const landownerCount = 1000;
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
  const [forager] = await sql<{ id: string }[]>`select id from users where email = ${benchForagerEmail}`;
  const [species] = await sql<{ id: string }[]>`select id from species where slug = 'bench-chanterelle'`;
  if (!forager || !species) throw new Error('the bench forager or species is missing');
  return { foragerId: forager.id, speciesId: species.id };
}

/** One batch: parcels, one year-round allowance with a daily limit each, one active permit each. */
async function insertBatch(sql: Sql, { from, to, foragerId, speciesId }: { from: number; to: number; foragerId: string; speciesId: string }) {
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
  });
}

/**
 * Seeds bench parcels next…target−1, where `next` is one past the highest bench parcel present,
 * then ANALYZEs. A re-run with the parcels in place seeds nothing. Two batches are in flight at a
 * time: the next one is generated while PostgreSQL writes the previous one.
 */
export async function seedBench(sql: Sql, target: number, log: (line: string) => void): Promise<SeedResult> {
  const started = performance.now();
  const { foragerId, speciesId } = await ensureBase(sql);
  const [row] = await sql<{ next: number }[]>`
    select coalesce(max(substring(name from 14)::int) + 1, 0)::int as next from parcels where name like 'Bench parcel %'`;
  const existing = row?.next ?? 0;
  if (existing < target) {
    log(`seeding bench parcels ${existing}…${target - 1} in batches of ${batchSize}…`);
    let inFlight: Promise<void> | null = null;
    for (let from = existing; from < target; from += batchSize) {
      const batch = insertBatch(sql, { from, to: Math.min(target, from + batchSize), foragerId, speciesId });
      await inFlight;
      inFlight = batch;
      if (from > existing && (from - existing) % (batchSize * 10) === 0) log(`  ${from} parcels (${(performance.now() - started) / 1000} s)`);
    }
    await inFlight;
    await sql`analyze`;
  }
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

/** A fresh session for the bench forager, and a clean slate of visits and check-ins so runs compare. */
export async function prepareForager(sql: Sql, foragerId: string): Promise<string> {
  const token = `bench-${randomUUID()}`;
  await sql`delete from sessions where user_id = ${foragerId}`;
  await sql`insert into sessions (session_token, user_id, expires) values (${token}, ${foragerId}, now() + interval '1 day')`;
  await sql`delete from check_ins where forager_id = ${foragerId}`;
  await sql`delete from visits where forager_id = ${foragerId} and id not in (select visit_id from harvest_entries where visit_id is not null)`;
  return token;
}
