import { mkdirSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { PgDialect } from 'drizzle-orm/pg-core';
import { measuredCandidatesQuery } from '../../src/db/field.queries';
import type { Forager } from '../../src/lib/field/types';
import { pgBin, root } from '../lib/setup.mjs';
import { parcelsPerTile, region, tileColumns } from './parcels';
import { summarise } from './stats';
import { capture } from './wrk';

/**
 * pgbench's random position in the seeded region (scripts/bench/parcels.ts) and an accuracy of
 * 3–15 m, as the HTTP positions have: pgbench's \set computes in double precision (pgbench manual,
 * "Built-in Operators").
 */
function randomPosition(parcels: number): string[] {
  // Past 100 000 parcels, in a random tile of the region (tileOffset in scripts/bench/parcels.ts).
  const tiles = Math.max(1, Math.ceil(parcels / parcelsPerTile));
  const [width, height] = [(region.east - region.west).toFixed(4), (region.north - region.south).toFixed(4)];
  return [
    `\\set tile random(0, ${tiles - 1})`,
    `\\set lon ${region.west} + (:tile % ${tileColumns}) * ${width} + random(0, 1000000) * ${width} / 1000000.0`,
    `\\set lat ${region.south} - (:tile / ${tileColumns}) * ${height} + random(0, 1000000) * ${height} / 1000000.0`,
    '\\set acc 3 + random(0, 120) / 10.0',
  ];
}

/** The bare candidate lookup of scripts/bench/sql-lookup.ts: candidates, containment and edge distance. */
export function bareLookupScript(parcels: number): string {
  return [
    ...randomPosition(parcels),
    `select id, ST_Covers(boundary, pt) as covers, ST_Distance(ST_Boundary(boundary)::geography, pt::geography) as edge_m
  from parcels, (select ST_SetSRID(ST_MakePoint(:lon::float8, :lat::float8), 4326) as pt) p
  where ST_DWithin(boundary::geography, pt::geography, :acc::float8);`,
    '',
  ].join('\n');
}

const literal = (value: unknown) => (typeof value === 'number' ? String(value) : `'${String(value).replace(/'/g, "''")}'`);

/**
 * The statement the check-in itself sends for its candidates (measuredCandidatesQuery, which
 * loadMeasuredParcelsNear in src/db/field.queries.ts sends), rendered from the app's own code for one bench member, so it cannot
 * drift from what the app runs: the position's parameters become pgbench variables, the forager's
 * the literals it would send.
 */
export function appCandidateScript(forager: Forager, parcels: number): string {
  const marks = { longitude: -1234.5, latitude: -2345.5, radiusM: -3456.5 };
  const { sql, params } = new PgDialect().sqlToQuery(measuredCandidatesQuery({ ...marks, forager }));
  const variable = new Map<unknown, string>([[marks.longitude, ':lon'], [marks.latitude, ':lat'], [marks.radiusM, ':acc']]);
  const text = sql.replace(/\$(\d+)/g, (_, n: string) => {
    const value = params[Number(n) - 1];
    return variable.get(value) ?? literal(value);
  });
  if (!text.includes(':lon') || !text.includes(':acc')) throw new Error('the check-in candidate statement no longer takes the position as parameters');
  return [...randomPosition(parcels), `${text.trim()};`, ''].join('\n');
}

export type PgbenchFigures = {
  label: string;
  clients: number;
  threads: number;
  seconds: number;
  transactions: number;
  failed: number;
  tps: number;
  latencyAverage: number;
  /** The select's own average from `-r`. */
  statementAverage: number | null;
  /** From the per-transaction log (`--log`): every transaction's latency. */
  p50: number;
  p95: number;
  p99: number;
  script: string;
};

/**
 * pgbench against the bench database: `-n -M prepared -c -j -T -r --log -f script`, as the app
 * prepares its candidate statement (src/db/client.ts). Percentiles come from the per-transaction
 * log: its third field is each transaction's elapsed time in microseconds (pgbench manual,
 * "Per-Transaction Logging").
 */
export async function runPgbench({ label, script, port, database, user, clients, threads, seconds }: {
  label: string; script: string; port: number; database: string; user: string; clients: number; threads: number; seconds: number;
}): Promise<PgbenchFigures> {
  const dir = join(root, '.local', 'bench', `pgbench-${label}`);
  rmSync(dir, { recursive: true, force: true });
  mkdirSync(dir, { recursive: true });
  const file = join(dir, 'script.sql');
  writeFileSync(file, script);
  const result = await capture(join(pgBin, 'pgbench'), [
    '-h', '127.0.0.1', '-p', String(port), '-U', user, '-n', '-M', 'prepared',
    '-c', String(clients), '-j', String(threads), '-T', String(seconds), '-r', '--log', `--log-prefix=${join(dir, 'log')}`, '-f', file, database,
  ], { echo: `pgbench ${label}` });
  if (result.code !== 0) throw new Error(`pgbench (${label}) exited with ${result.code}: ${result.stderr.slice(0, 400)}`);
  const out = result.stdout;
  const number = (re: RegExp) => {
    const m = re.exec(out);
    if (!m) throw new Error(`pgbench (${label}) printed no ${re.source}`);
    return Number(m[1]);
  };
  const statementLines = out.split('\n').slice(out.split('\n').findIndex((l) => l.includes('statement latencies')) + 1);
  const select = statementLines.find((l) => /^\s*[\d.]+\s+\d+\s+select/i.test(l));
  const latencies: number[] = [];
  for (const name of readdirSync(dir).filter((n) => n.startsWith('log.'))) {
    for (const line of readFileSync(join(dir, name), 'utf8').split('\n')) {
      const us = Number(line.split(' ')[2]);
      if (line && Number.isFinite(us)) latencies.push(us / 1000);
    }
  }
  const stats = summarise(latencies);
  return {
    label,
    clients,
    threads,
    seconds,
    transactions: number(/number of transactions actually processed: (\d+)/),
    failed: /number of failed transactions: (\d+)/.exec(out) ? number(/number of failed transactions: (\d+)/) : 0,
    tps: number(/tps = ([\d.]+) \(without initial connection time\)/),
    latencyAverage: number(/latency average = ([\d.]+) ms/),
    statementAverage: select ? Number(select.trim().split(/\s+/)[0]) : null,
    p50: stats.p50,
    p95: stats.p95,
    p99: stats.p99,
    script,
  };
}
