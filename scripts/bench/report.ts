import type { FieldOfflineFigures } from './field-offline';
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { AuditFigures } from './audit';
import type { HttpFigures } from './http-check-ins';
import type { NaiveFigures } from './naive-scan';
import type { ParcelFigures } from './seed';
import type { ProfileFigures } from './cpu-profile';
import type { PgbenchFigures } from './pgbench';
import type { SqlFigures } from './sql-lookup';
import type { WrkResults } from './wrk-check-ins';
import type { ScaleFigures } from './scale';

export type ScaleResults = ({ available: true } & ScaleFigures) | { available: false; reason: string } | null;

/** Issue 15's scale target: at 1 000 000 parcels the candidate statement's and the check-in's p50 within 1.5× of theirs at 100 000 (null: --scale not asked). */
export function scaleTargets(scale: ScaleResults, pgbench: PgbenchResults, wrk: WrkResults): Target[] {
  if (scale === null) return [];
  const ratio = (big: number | undefined, small: number | undefined) => (big === undefined || small === undefined ? null : big / small);
  const statement = scale.available && pgbench.available ? ratio(scale.app.p50, pgbench.app.p50) : null;
  const bare = scale.available && pgbench.available ? ratio(scale.bare.p50, pgbench.bare.p50) : null;
  const endpoint = scale.available && wrk.available ? ratio(scale.checkIns.p50, wrk.checkIns.p50) : null;
  const within = (value: number | null) => (value === null ? null : value <= 1.5);
  return [
    { name: "check-in's candidate statement p50, 1M / 100k parcels (pgbench)", value: statement, target: '≤ 1.5', met: within(statement) },
    { name: 'bare candidate query p50, 1M / 100k parcels (pgbench)', value: bare, target: '≤ 1.5', met: within(bare) },
    { name: 'check-in p50, 1M / 100k parcels (wrk)', value: endpoint, target: '≤ 1.5', met: within(endpoint) },
  ];
}

export type AuditResults = (AuditFigures & { available: true; seeding: { seeded: number; ms: number; limitsAdded: number } }) | { available: false; reason: string };

type Target = { name: string; value: number | null; target: string; met: boolean | null };

const count = (n: number) => (n >= 1e6 && n % 1e6 === 0 ? `${n / 1e6}M` : n.toLocaleString('en-US'));

/** Issue 5: the club audit and a season report over 1 000 000 entries, each under a second (medians of the timed runs). */
export function auditTargets(audit: AuditResults): Target[] {
  if (!audit.available) {
    return [
      { name: 'audit over the bench entries ms', value: null, target: '< 1000', met: null },
      { name: 'season report ms', value: null, target: '< 1000', met: null },
      { name: 'audit statements grouping the kept totals in memory (1 = yes)', value: null, target: '= 1', met: null },
    ];
  }
  const report = Math.max(audit.clubReport.medianMs, audit.ownerReport.medianMs);
  return [
    { name: `audit over ${count(audit.entries)} entries ms`, value: audit.audit.medianMs, target: '< 1000', met: audit.audit.medianMs < 1000 },
    { name: 'season report ms (slower of club and landowner)', value: report, target: '< 1000', met: report < 1000 },
    { name: 'audit statements grouping the kept totals in memory (1 = yes)', value: audit.inMemory ? 1 : 0, target: '= 1', met: audit.inMemory },
  ];
}

export type PgbenchResults = { available: true; bare: PgbenchFigures; app: PgbenchFigures } | { available: false; reason: string };

/**
 * Issue 15's targets for the check-in, from wrk's run (8 connections, each a forager of its own) and
 * pgbench's bare candidate lookup at the same concurrency: at least 1 000 check-ins/s, p95 at most
 * 10 ms, the endpoint's p50 within 4× the bare query's, and the app's CPU per check-in within 4× its
 * CPU per signed-out GET /api/me.
 */
export function checkInTargets(wrk: WrkResults, endpointOverQueryP50: number | null, cpuOverFloor: number | null): Target[] {
  const at = (check: (w: Extract<WrkResults, { available: true }>) => number) => (wrk.available ? check(wrk) : null);
  const perSecond = at((w) => w.checkIns.perSecond);
  const p95 = at((w) => w.checkIns.p95);
  // Only entries answered 201 (recorded) count.
  const entries = wrk.available && wrk.entries.available ? (wrk.entries.statuses['201'] ?? 0) / wrk.entries.seconds : null;
  return [
    { name: 'check-ins per second (wrk)', value: perSecond, target: '≥ 1000', met: perSecond === null ? null : perSecond >= 1000 },
    { name: 'check-in p95 ms (wrk)', value: p95, target: '≤ 10', met: p95 === null ? null : p95 <= 10 },
    { name: 'check-in p50 / bare candidate query p50 (pgbench)', value: endpointOverQueryP50, target: '≤ 4', met: endpointOverQueryP50 === null ? null : endpointOverQueryP50 <= 4 },
    { name: 'app CPU per check-in / per signed-out GET /api/me', value: cpuOverFloor, target: '≤ 4', met: cpuOverFloor === null ? null : cpuOverFloor <= 4 },
    { name: 'entries recorded per second, 8 foragers on parcels of their own (wrk)', value: entries, target: '≥ 300', met: entries === null ? null : entries >= 300 },
  ];
}

/** The ten functions with the most self time in the app server during the profiled run (check-ins, or entries with BENCH_PROFILE=entries). */
export function profileText(p: ProfileFigures, of: 'check-ins' | 'entries' = 'check-ins'): string {
  const header = ['self ms', '%', 'function', 'where'];
  const body = p.top.map((t) => [t.ms.toFixed(0), t.percent.toFixed(1), t.name, t.where]);
  const widths = header.map((h, i) => Math.max(h.length, ...body.map((row) => (row[i] ?? '').length)));
  const line = (cells: string[]) => cells.map((c, i) => (i < 2 ? c.padStart(widths[i] ?? 0) : c.padEnd(widths[i] ?? 0))).join('  ').trimEnd();
  return [
    `CPU profile of the app server during the ${of === 'entries' ? 'entries' : 'check-in'} run (node --cpu-prof, ${p.file}): ` +
      `${(p.windowMs / 1000).toFixed(1)} s counted, ${(p.busyMs / 1000).toFixed(2)} s busy, ${(p.idleMs / 1000).toFixed(2)} s idle; the ten functions with the most self time (% of busy):`,
    line(header),
    widths.map((w) => '─'.repeat(w)).join('  '),
    ...body.map(line),
  ].join('\n');
}

export type BenchResults = {
  at: string;
  machine: { cpus: number; cpuModel: string; memoryGb: number; node: string; postgres: string; postgis: string };
  parcels: ParcelFigures;
  seeding: { seeded: number; ms: number };
  sql: SqlFigures;
  naive: NaiveFigures | null;
  http: HttpFigures & { entry: string | null };
  wrk: WrkResults;
  pgbench: PgbenchResults;
  audit: AuditResults;
  field: FieldResults;
  scale: ScaleResults;
  ratios: { endpointOverSqlP50: number | null; wrkOverPgbenchP50: number | null; wrkOverAppStatementP50: number | null; cpuOverFloor: number | null; naiveOverEndpointP50: number | null; naiveOverSqlP50: number | null };
  targets: Target[];
  totalMs: number;
};

const ms = (value: number) => (Number.isFinite(value) ? value.toFixed(value < 10 ? 2 : 1) : '—');
const rate = (value: number) => (value < 1 ? value.toFixed(2) : Math.round(value).toLocaleString('en-US'));
const times = (value: number | null) => (value === null ? '—' : `${value.toFixed(value < 10 ? 2 : 0)}×`);
const mark = (met: boolean | null) => (met === null ? 'not measured' : met ? 'met' : 'NOT met');

function rows(r: BenchResults): string[][] {
  const { sql, naive, http, wrk, pgbench } = r;
  const out: string[][] = [];
  if (wrk.available) {
    const w = wrk.checkIns;
    out.push([`POST /api/check-ins, wrk`, `${w.connections} connections, ${w.seconds.toFixed(0)} s`, ms(w.p50), ms(w.p95), rate(w.perSecond)]);
    out.push([`floor: GET /api/me signed out, wrk`, `${wrk.floor.connections} connections, ${wrk.floor.seconds.toFixed(0)} s`, ms(wrk.floor.p50), ms(wrk.floor.p95), rate(wrk.floor.perSecond)]);
    if (wrk.entries.available) out.push([`POST /api/harvest-entries, wrk`, `${wrk.entries.connections} foragers, ${wrk.entries.seconds.toFixed(0)} s`, ms(wrk.entries.p50), ms(wrk.entries.p95), rate(wrk.entries.perSecond)]);
    out.push([`POST /api/${wrk.profiled.of === 'entries' ? 'harvest-entries' : 'check-ins'}, wrk, under --cpu-prof`, `${wrk.profiled.connections} connections, ${wrk.profiled.seconds.toFixed(0)} s`, ms(wrk.profiled.p50), ms(wrk.profiled.p95), rate(wrk.profiled.perSecond)]);
  }
  if (pgbench.available) {
    for (const [label, f] of [['bare candidate query, pgbench', pgbench.bare], ["check-in's candidate statement, pgbench", pgbench.app]] as const) {
      out.push([label, `${f.clients} clients, ${f.seconds} s`, ms(f.p50), ms(f.p95), rate(f.tps)]);
    }
  }
  out.push(
    ['bare SQL from Node (cross-check)', `${sql.concurrent.concurrency} connections`, ms(sql.concurrent.p50), ms(sql.concurrent.p95), rate(sql.concurrent.perSecond)],
    ['bare SQL from Node, one connection', 'serial', ms(sql.serial.p50), ms(sql.serial.p95), rate(1000 / sql.serial.mean)],
  );
  if (naive) out.push(['naive turf scan of every parcel', `${naive.points} points`, ms(naive.msPerLookup), '', rate(1000 / naive.msPerLookup)]);
  if (http.available) {
    out.push(['POST /api/check-ins from Node (cross-check)', `${http.concurrent.concurrency} clients`, ms(http.concurrent.p50), ms(http.concurrent.p95), rate(http.concurrent.perSecond)]);
    out.push(['POST /api/check-ins from Node, one client', 'serial', ms(http.serial.p50), ms(http.serial.p95), rate(1000 / http.serial.mean)]);
    out.push(['floor: GET /api/me signed out from Node', `${http.concurrent.concurrency} clients`, ms(http.floor.p50), ms(http.floor.p95), rate(http.floor.perSecond)]);
  }
  if (r.scale?.available) {
    const { scale } = r;
    out.push([`POST /api/check-ins, wrk, ${count(scale.parcels)} parcels`, `${scale.checkIns.connections} connections, ${scale.checkIns.seconds.toFixed(0)} s`, ms(scale.checkIns.p50), ms(scale.checkIns.p95), rate(scale.checkIns.perSecond)]);
    out.push([`bare candidate query, pgbench, ${count(scale.parcels)} parcels`, `${scale.bare.clients} clients, ${scale.bare.seconds} s`, ms(scale.bare.p50), ms(scale.bare.p95), rate(scale.bare.tps)]);
    out.push([`check-in's candidate statement, pgbench, ${count(scale.parcels)}`, `${scale.app.clients} clients, ${scale.app.seconds} s`, ms(scale.app.p50), ms(scale.app.p95), rate(scale.app.tps)]);
  }
  const { audit } = r;
  if (audit.available) {
    out.push(['club audit, whole club (auditTallies)', `${count(audit.entries)} entries, ${audit.audit.runs} runs`, ms(audit.audit.medianMs), '', rate(1000 / audit.audit.medianMs)]);
    out.push(['season report, club, one parcel', `${count(audit.entries)} entries, ${audit.clubReport.runs} runs`, ms(audit.clubReport.medianMs), '', rate(1000 / audit.clubReport.medianMs)]);
    out.push(['season report, landowner, one parcel', `${count(audit.entries)} entries, ${audit.ownerReport.runs} runs`, ms(audit.ownerReport.medianMs), '', rate(1000 / audit.ownerReport.medianMs)]);
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
  const { wrk, pgbench } = r;
  const cpu = (value: number | null) => (value === null ? '—' : `${value.toFixed(2)} ms`);
  return [
    wrk.available
      ? `wrk check-ins: ${wrk.checkIns.requests} requests, p50 ${ms(wrk.checkIns.p50)}, p90 ${ms(wrk.checkIns.p90)}, p95 ${ms(wrk.checkIns.p95)}, p99 ${ms(wrk.checkIns.p99)} ms; ` +
        `statuses ${JSON.stringify(wrk.checkIns.statuses)}, verdicts ${JSON.stringify(wrk.checkIns.verdicts)}, socket errors ${JSON.stringify(wrk.checkIns.errors)}; ` +
        `app CPU ${cpu(wrk.checkIns.serverCpuMsPerRequest)} per check-in, ${cpu(wrk.floor.serverCpuMsPerRequest)} per signed-out GET /api/me (${times(r.ratios.cpuOverFloor)}); ` +
        `PostgreSQL's CPU ${cpu(wrk.checkIns.databaseCpuMsPerRequest)} per check-in; ` +
        `${wrk.profiled.of} under --cpu-prof ${rate(wrk.profiled.perSecond)}/s (${ms(wrk.profiled.p50)} ms p50)`
      : `wrk: NOT MEASURED — ${wrk.reason}`,
    wrk.available
      ? wrk.entries.available
        ? `wrk entries: ${wrk.entries.requests} requests from ${wrk.entries.connections} foragers on ${wrk.entries.parcels} parcels, statuses ${JSON.stringify(wrk.entries.statuses)}, p50 ${ms(wrk.entries.p50)}, p95 ${ms(wrk.entries.p95)} ms; app CPU ${cpu(wrk.entries.serverCpuMsPerRequest)}, PostgreSQL's ${cpu(wrk.entries.databaseCpuMsPerRequest)} per entry`
        : `wrk entries: NOT MEASURED — ${wrk.entries.reason}`
      : 'wrk entries: NOT MEASURED',
    pgbench.available
      ? [pgbench.bare, pgbench.app]
          .map((f) => `pgbench ${f.label}: ${f.transactions} transactions (${f.failed} failed), ${rate(f.tps)} tps, latency average ${ms(f.latencyAverage)} ms (the select ${f.statementAverage === null ? '—' : ms(f.statementAverage)} ms), p50 ${ms(f.p50)}, p95 ${ms(f.p95)}, p99 ${ms(f.p99)} ms`)
          .join('; ') + `; check-in p50 (wrk) / the check-in's candidate statement p50 = ${times(r.ratios.wrkOverAppStatementP50)}`
      : `pgbench: NOT MEASURED — ${pgbench.reason}`,
    `${p.parcels.toLocaleString('en-US')} parcels: ${p.meanVertices.toFixed(1)} vertices on average, ${((100 * p.withHole) / p.parcels).toFixed(1)} % with a hole, ` +
      `${((100 * p.multi) / p.parcels).toFixed(1)} % MultiPolygons, ${p.minHa.toFixed(1)}–${p.maxHa.toFixed(1)} ha (mean ${p.meanHa.toFixed(1)}), covering the region ${p.coverage.toFixed(2)}× over; ${p.invalid} invalid by ST_IsValid`,
    `machine: ${r.machine.cpus} CPU cores (${r.machine.cpuModel}), ${r.machine.memoryGb} GB, Node ${r.machine.node}, PostgreSQL ${r.machine.postgres}, PostGIS ${r.machine.postgis}`,
    `seeding: ${r.seeding.seeded.toLocaleString('en-US')} parcels in ${(r.seeding.ms / 1000).toFixed(1)} s; whole run ${(r.totalMs / 1000).toFixed(1)} s`,
    `SQL: ${r.sql.meanCandidates.toFixed(2)} candidates per lookup, ${(100 * r.sql.coveredShare).toFixed(0)} % of positions inside a parcel; GiST index on boundary::geography used: ${r.sql.indexUsed ? 'yes' : 'NO'}`,
    r.naive ? `naive scan: boundaries loaded in ${(r.naive.loadMs / 1000).toFixed(1)} s; its answers match PostGIS ST_Covers at ${r.naive.matchesPostgis} of ${r.naive.points} points` : 'naive scan: left out',
    r.http.available
      ? `endpoint: ${r.http.concurrent.count} requests measured (${r.http.concurrent.failures} failed), statuses ${JSON.stringify(r.http.statuses)}, verdicts ${JSON.stringify(r.http.verdicts)}; ` +
        `app server CPU ${r.http.concurrent.serverCpuMsPerRequest === null ? '—' : r.http.concurrent.serverCpuMsPerRequest.toFixed(2)} ms per check-in; server ${r.http.entry}`
      : `endpoint: NOT MEASURED — ${r.http.reason}${r.http.entry ? ` (server ${r.http.entry})` : ''}`,
    ...(r.scale === null ? [] : r.scale.available
      ? [`scale: ${count(r.scale.parcels)} parcels (${r.scale.seeding.seeded > 0 ? `seeded in ${(r.scale.seeding.ms / 1000).toFixed(0)} s` : 'seeded before'}); check-in statuses ${JSON.stringify(r.scale.checkIns.statuses)}, verdicts ${JSON.stringify(r.scale.checkIns.verdicts)}`]
      : [`scale: NOT MEASURED — ${r.scale.reason}`]),
    ...auditLines(r.audit),
    ...fieldLines(r.field),
    `ratios (Node-driven, cross-check): endpoint p50 / bare SQL p50 = ${times(r.ratios.endpointOverSqlP50)}; naive scan / endpoint p50 = ${times(r.ratios.naiveOverEndpointP50)}; naive scan / bare SQL p50 = ${times(r.ratios.naiveOverSqlP50 ?? null)}`,
  ];
}

export type FieldResults = ({ available: true } & FieldOfflineFigures) | { available: false; reason: string };

/** Issue 12's targets: the Field page's scripts, the field pack of 500 parcels, and the offline verdict on it on a slowed CPU. */
export function fieldTargets(field: FieldResults): Target[] {
  if (!field.available) {
    return [
      { name: 'Field page JavaScript KB gzipped', value: null, target: '≤ 150', met: null },
      { name: 'field pack of 500 parcels KB gzipped', value: null, target: '≤ 1024', met: null },
      { name: 'offline verdict p95 ms, 500 parcels, CPU 4× slower', value: null, target: '≤ 20', met: null },
    ];
  }
  const kb = (bytes: number) => bytes / 1024;
  return [
    { name: 'Field page JavaScript KB gzipped', value: kb(field.page.gzipBytes), target: '≤ 150', met: kb(field.page.gzipBytes) <= 150 },
    { name: `field pack of ${field.pack.parcels} parcels KB gzipped`, value: kb(field.pack.gzipBytes), target: '≤ 1024', met: kb(field.pack.gzipBytes) <= 1024 },
    { name: `offline verdict p95 ms, ${field.pack.parcels} parcels, CPU ${field.verdict.throttle}× slower`, value: field.verdict.p95Ms, target: '≤ 20', met: field.verdict.p95Ms <= 20 },
  ];
}

function fieldLines(field: FieldResults): string[] {
  if (!field.available) return [`field page and pack: NOT MEASURED — ${field.reason}`];
  const kb = (bytes: number) => `${(bytes / 1024).toFixed(1)} KB`;
  return [
    `Field page: ${field.page.scripts} scripts, ${kb(field.page.bytes)}, ${kb(field.page.gzipBytes)} gzipped (${field.page.files.map((f) => `${f.path.replace(/^\/_astro\//, '')} ${kb(f.gzipBytes)}`).join(', ')})`,
    `field pack: ${field.pack.parcels} parcels, ${kb(field.pack.bytes)}, ${kb(field.pack.gzipBytes)} gzipped`,
    `offline verdict in Chromium, CPU ${field.verdict.throttle}× slower: ${field.verdict.positions} positions, p50 ${ms(field.verdict.p50Ms)}, p95 ${ms(field.verdict.p95Ms)}, max ${ms(field.verdict.maxMs)} ms; verdicts ${JSON.stringify(field.verdict.verdicts)}`,
  ];
}

function auditLines(audit: AuditResults): string[] {
  if (!audit.available) return [`audit and season report: NOT MEASURED — ${audit.reason}`];
  const span = (t: { minMs: number; medianMs: number; maxMs: number }) => `min ${ms(t.minMs)}, median ${ms(t.medianMs)}, max ${ms(t.maxMs)} ms`;
  return [
    `ledger: ${audit.entries.toLocaleString('en-US')} bench harvest entries on ${audit.entryParcels} parcels; ` +
      (audit.seeding.seeded > 0 ? `${audit.seeding.seeded.toLocaleString('en-US')} seeded in ${(audit.seeding.ms / 1000).toFixed(1)} s` : 'none seeded this run') +
      (audit.seeding.limitsAdded > 0 ? `, ${audit.seeding.limitsAdded} season and parcel-season limits added` : ''),
    `audit (club, as of ${audit.asOf}, ${audit.clubParcels.toLocaleString('en-US')} parcels in the club's view): ${span(audit.audit)}; ${audit.audit.rows} rows; ` +
      `its statements: ${audit.audit.statements.map((s) => `${s.label} ${ms(s.ms)} ms (${s.rows} rows)`).join(', ')}`,
    `kept totals: ${audit.totalsRows.toLocaleString('en-US')} rows of harvest_totals; each statement over them under EXPLAIN ANALYZE: ${audit.plans.map((p) => (p.executionMs === null ? '—' : `${ms(p.executionMs)} ms`)).join(', ')}`,
    `season report, club: ${span(audit.clubReport)}; ${audit.clubReport.species} species, ${audit.clubReport.entries} entries, ${audit.clubReport.foragers} foragers`,
    `season report, landowner ${audit.ownerReport.ownerId}: ${span(audit.ownerReport)}; ${audit.ownerReport.species} species, ${audit.ownerReport.entries} entries, ${audit.ownerReport.foragers} foragers`,
    `kept totals grouped in memory (no sort or hash on disk) in every statement over them: ${audit.inMemory ? 'yes' : 'NO'} (indexes in the plans: ${audit.indexesUsed.join(', ') || 'none'})`,
  ];
}

function targetLines(r: BenchResults): string[] {
  return r.targets.map((t) => `${t.name}: ${t.value === null ? '—' : t.value.toFixed(2)} (target ${t.target}) — ${mark(t.met)}`);
}

/** The table for the terminal, and results.json + results.md in .local/bench. */
export function report(r: BenchResults, dir: string): string {
  const text = [table(header, rows(r)), '', ...summaryLines(r), '', ...(r.wrk.available ? [profileText(r.wrk.profile, r.wrk.profiled.of), ''] : []), 'targets:', ...targetLines(r).map((l) => `  ${l}`)].join('\n');
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
    ...(r.wrk.available ? ['## CPU profile', '', '```', profileText(r.wrk.profile, r.wrk.profiled.of), '```', ''] : []),
    ...(r.pgbench.available ? ["## pgbench scripts (the bare lookup; the check-in's candidate statement)", '', '```', r.pgbench.bare.script, '```', '', '```', r.pgbench.app.script, '```', ''] : []),
    '## Plan of the bare query (EXPLAIN ANALYZE, one in-parcel position)',
    '',
    '```',
    r.sql.plan,
    '```',
    '',
    ...(r.audit.available
      ? [
          "## Plans of the audit's statements over the kept totals (EXPLAIN (ANALYZE, BUFFERS), with the parameters auditTallies sent)",
          '',
          ...r.audit.plans.flatMap((p) => ['```', p.plan, '```', '']),
        ]
      : []),
  ].join('\n');
  writeFileSync(join(dir, 'results.md'), md);
  return text;
}
