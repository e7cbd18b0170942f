import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { HttpFigures } from './http-check-ins';
import type { NaiveFigures } from './naive-scan';
import type { ParcelFigures } from './seed';
import type { SqlFigures } from './sql-lookup';

export type BenchResults = {
  at: string;
  machine: { cpus: number; cpuModel: string; memoryGb: number; node: string; postgres: string; postgis: string };
  parcels: ParcelFigures;
  seeding: { seeded: number; ms: number };
  sql: SqlFigures;
  naive: NaiveFigures;
  http: HttpFigures & { entry: string | null };
  ratios: { endpointOverSqlP50: number | null; naiveOverEndpointP50: number | null; naiveOverSqlP50: number };
  targets: { name: string; value: number | null; target: string; met: boolean | null }[];
  totalMs: number;
};

const ms = (value: number) => (Number.isFinite(value) ? value.toFixed(value < 10 ? 2 : 1) : '—');
const rate = (value: number) => Math.round(value).toLocaleString('en-US');
const times = (value: number | null) => (value === null ? '—' : `${value.toFixed(value < 10 ? 2 : 0)}×`);
const mark = (met: boolean | null) => (met === null ? 'not measured' : met ? 'met' : 'NOT met');

function rows(r: BenchResults): string[][] {
  const { sql, naive, http } = r;
  const out = [
    ['bare SQL candidates + covers + edge distance', `${sql.concurrent.concurrency} connections`, ms(sql.concurrent.p50), ms(sql.concurrent.p95), rate(sql.concurrent.perSecond)],
    ['bare SQL, one connection', 'serial', ms(sql.serial.p50), ms(sql.serial.p95), rate(1000 / sql.serial.mean)],
    ['naive turf scan of every parcel', `${naive.points} points`, ms(naive.msPerLookup), '', rate(1000 / naive.msPerLookup)],
  ];
  if (http.available) {
    out.push(['POST /api/check-ins over loopback', `${http.concurrent.concurrency} clients`, ms(http.concurrent.p50), ms(http.concurrent.p95), rate(http.concurrent.perSecond)]);
    out.push(['POST /api/check-ins, one client', 'serial', ms(http.serial.p50), ms(http.serial.p95), rate(1000 / http.serial.mean)]);
    out.push(['floor: GET /api/me signed out (no database)', `${http.concurrent.concurrency} clients`, ms(http.floor.p50), ms(http.floor.p95), rate(http.floor.perSecond)]);
  }
  return out;
}

function table(header: string[], body: string[][]): string {
  const widths = header.map((h, i) => Math.max(h.length, ...body.map((row) => (row[i] ?? '').length)));
  const line = (cells: string[]) => cells.map((c, i) => (i === 0 ? c.padEnd(widths[i] ?? 0) : c.padStart(widths[i] ?? 0))).join('  ');
  return [line(header), widths.map((w) => '─'.repeat(w)).join('  '), ...body.map(line)].join('\n');
}

const header = ['measurement', 'load', 'p50 ms', 'p95 ms', 'per s'];

function summaryLines(r: BenchResults): string[] {
  const p = r.parcels;
  return [
    `${p.parcels.toLocaleString('en-US')} parcels: ${p.meanVertices.toFixed(1)} vertices on average, ${((100 * p.withHole) / p.parcels).toFixed(1)} % with a hole, ` +
      `${((100 * p.multi) / p.parcels).toFixed(1)} % MultiPolygons, ${p.minHa.toFixed(1)}–${p.maxHa.toFixed(1)} ha (mean ${p.meanHa.toFixed(1)}), covering the region ${p.coverage.toFixed(2)}× over; ${p.invalid} invalid by ST_IsValid`,
    `machine: ${r.machine.cpus} CPU cores (${r.machine.cpuModel}), ${r.machine.memoryGb} GB, Node ${r.machine.node}, PostgreSQL ${r.machine.postgres}, PostGIS ${r.machine.postgis}`,
    `seeding: ${r.seeding.seeded.toLocaleString('en-US')} parcels in ${(r.seeding.ms / 1000).toFixed(1)} s; whole run ${(r.totalMs / 1000).toFixed(1)} s`,
    `SQL: ${r.sql.meanCandidates.toFixed(2)} candidates per lookup, ${(100 * r.sql.coveredShare).toFixed(0)} % of positions inside a parcel; GiST index on boundary::geography used: ${r.sql.indexUsed ? 'yes' : 'NO'}`,
    `naive scan: boundaries loaded in ${(r.naive.loadMs / 1000).toFixed(1)} s; its answers match PostGIS ST_Covers at ${r.naive.matchesPostgis} of ${r.naive.points} points`,
    r.http.available
      ? `endpoint: ${r.http.concurrent.count} requests measured (${r.http.concurrent.failures} failed), statuses ${JSON.stringify(r.http.statuses)}, verdicts ${JSON.stringify(r.http.verdicts)}; ` +
        `app server CPU ${r.http.concurrent.serverCpuMsPerRequest === null ? '—' : r.http.concurrent.serverCpuMsPerRequest.toFixed(2)} ms per check-in; server ${r.http.entry}`
      : `endpoint: NOT MEASURED — ${r.http.reason}${r.http.entry ? ` (server ${r.http.entry})` : ''}`,
    `ratios: endpoint p50 / bare SQL p50 = ${times(r.ratios.endpointOverSqlP50)}; naive scan / endpoint p50 = ${times(r.ratios.naiveOverEndpointP50)}; naive scan / bare SQL p50 = ${times(r.ratios.naiveOverSqlP50)}`,
  ];
}

function targetLines(r: BenchResults): string[] {
  return r.targets.map((t) => `${t.name}: ${t.value === null ? '—' : t.value.toFixed(2)} (target ${t.target}) — ${mark(t.met)}`);
}

/** The table for the terminal, and results.json + results.md in .local/bench. */
export function report(r: BenchResults, dir: string): string {
  const text = [table(header, rows(r)), '', ...summaryLines(r), '', 'targets:', ...targetLines(r).map((l) => `  ${l}`)].join('\n');
  mkdirSync(dir, { recursive: true });
  writeFileSync(join(dir, 'results.json'), `${JSON.stringify(r, null, 2)}\n`);
  const md = [
    `# Tallywood benchmark, ${r.at}`,
    '',
    `| ${header.join(' | ')} |`,
    `|${header.map((_, i) => (i === 0 ? '---' : '---:')).join('|')}|`,
    ...rows(r).map((row) => `| ${row.join(' | ')} |`),
    '',
    ...summaryLines(r).map((l) => `- ${l}`),
    '',
    '## Targets',
    '',
    ...targetLines(r).map((l) => `- ${l}`),
    '',
    '## Plan of the bare query (EXPLAIN ANALYZE, one in-parcel position)',
    '',
    '```',
    r.sql.plan,
    '```',
    '',
  ].join('\n');
  writeFileSync(join(dir, 'results.md'), md);
  return text;
}
