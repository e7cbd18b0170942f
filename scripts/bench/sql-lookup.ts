import type { Sql } from 'postgres';
import type { BenchPosition } from './parcels';
import { runConcurrently, summarise, type Latencies } from './stats';

/**
 * The bare candidate lookup through the GiST index on boundary::geography (ST_DWithin on geography
 * uses it: PostGIS manual, REFERENCES §4), with containment and the distance to the edge for each
 * candidate — what a check-in needs from the database before any rule is applied.
 */
function lookup(sql: Sql, { longitude, latitude, accuracyM }: BenchPosition) {
  return sql`
    select id, ST_Covers(boundary, pt) as covers, ST_Distance(ST_Boundary(boundary)::geography, pt::geography) as edge_m
    from parcels, (select ST_SetSRID(ST_MakePoint(${longitude}::float8, ${latitude}::float8), 4326) as pt) p
    where ST_DWithin(boundary::geography, pt::geography, ${accuracyM}::float8)`;
}

export type SqlFigures = {
  concurrent: Latencies & { concurrency: number; perSecond: number; failures: number };
  serial: Latencies;
  meanCandidates: number;
  coveredShare: number;
  plan: string;
  indexUsed: boolean;
};

export async function measureSql(
  sql: Sql,
  positions: BenchPosition[],
  { concurrency, count, maxMs }: { concurrency: number; count: number; maxMs: number },
): Promise<SqlFigures> {
  const explainAt = positions.find((p) => p.kind === 'in-parcel') ?? positions[0];
  if (!explainAt) throw new Error('no positions');
  const planRows = await sql.unsafe(
    `explain (analyze, buffers, costs off)
     select id, ST_Covers(boundary, pt) as covers, ST_Distance(ST_Boundary(boundary)::geography, pt::geography) as edge_m
     from parcels, (select ST_SetSRID(ST_MakePoint($1::float8, $2::float8), 4326) as pt) p
     where ST_DWithin(boundary::geography, pt::geography, $3::float8)`,
    [explainAt.longitude, explainAt.latitude, explainAt.accuracyM],
  );
  const plan = planRows.map((r) => String((r as Record<string, unknown>)['QUERY PLAN'])).join('\n');

  // Warm-up: caches, prepared statements, every connection of the pool.
  await runConcurrently(positions, { concurrency, count: 400, maxMs: 20_000 }, async (p) => void (await lookup(sql, p)));

  let candidates = 0;
  let covered = 0;
  let looked = 0;
  const run = await runConcurrently(positions, { concurrency, count, maxMs }, async (p) => {
    const rows = await lookup(sql, p);
    looked += 1;
    candidates += rows.length;
    if (rows.some((r) => r.covers)) covered += 1;
  });
  const serialCount = Math.min(1000, count);
  const serial = await runConcurrently(positions.slice(count % positions.length), { concurrency: 1, count: serialCount, maxMs: maxMs / 2 }, async (p) => void (await lookup(sql, p)));
  return {
    concurrent: { ...summarise(run.latencies), concurrency, perSecond: run.latencies.length / (run.wallMs / 1000), failures: run.failures },
    serial: summarise(serial.latencies),
    meanCandidates: candidates / Math.max(1, looked),
    coveredShare: covered / Math.max(1, looked),
    plan,
    indexUsed: /Index Scan using parcels_boundary_geog_gist|Bitmap Index Scan on parcels_boundary_geog_gist/.test(plan),
  };
}

/** How many parcels cover each position, by PostGIS: the naive scan's answers are checked against these. */
export async function coveringCounts(sql: Sql, positions: BenchPosition[]): Promise<number[]> {
  const counts: number[] = [];
  for (const { longitude, latitude } of positions) {
    const [row] = await sql<{ n: number }[]>`
      select count(*)::int as n from parcels
      where ST_Covers(boundary, ST_SetSRID(ST_MakePoint(${longitude}::float8, ${latitude}::float8), 4326))`;
    counts.push(row?.n ?? 0);
  }
  return counts;
}
