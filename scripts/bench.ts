// `npm run bench`: figures for the check-in path on a large synthetic register (HTTP load from wrk,
// the bare candidate query and the check-in's own candidate statement from pgbench, a CPU profile
// of the app server during the check-in run, and the older Node-driven figures as a cross-check), then for the club
// audit and the season report over a synthetic ledger (1 000 000 harvest entries on the first 200
// bench parcels, scripts/bench/audit.ts), with the plan of the audit's aggregate statement. Prints a
// table and writes .local/bench/results.json and results.md. A benchmark, not a test: it asserts nothing.
//
// Its own PostgreSQL cluster (.local/pg-bench, 127.0.0.1:54349, database tallywood_bench) keeps the
// seeded parcels and entries between runs, so only the first run seeds. Environment (all optional):
//   BENCH_PARCELS (100000) · BENCH_REQUESTS (5000) · BENCH_SQL_QUERIES (5000) · BENCH_NAIVE_POINTS (20)
//   BENCH_ENTRIES (1000000) · BENCH_CONCURRENCY (8) · BENCH_MAX_SECONDS (60, per measured phase)
//   BENCH_SECONDS (20, each wrk and pgbench run) · BENCH_WRK_THREADS (BENCH_CONCURRENCY: one connection per thread)
//   TALLYWOOD_BENCH_PG_PORT (54349) · BENCH_SERVER_ENTRY (another build's server/entry.mjs, to measure an earlier commit)
//   TALLYWOOD_PROCESSES (the server's app processes, as for `npm start`: one per core unless set; the profiled run has one)
//   BENCH_PROFILE (check-ins: the load the profiled run repeats; entries profiles the recording of entries instead)
//   BENCH_WARM_UP_SECONDS (60: the check-ins sent before the measured runs, scripts/bench/wrk-check-ins.ts says why)
// Flags (after `npm run bench --`): --check-ins measures only what issue 15's targets are judged on
// (pgbench, wrk, the CPU profile), leaving out the Node-driven cross-checks, the naive scan, the
// audit and the Field page; --build builds the app into .local/bench-dist first, so the figures are
// those of the code in this checkout; --scale also seeds 1 000 000 parcels in a database of its own
// (once, a few minutes) and measures the candidate statements and the check-in there.
import type { ChildProcess } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { cpus, totalmem } from 'node:os';
import { join } from 'node:path';
import postgres from 'postgres';
import { closeDb, createDb } from '../src/db/client';
import { applyMigrations } from '../src/db/migrations';
import { measureAudit, seedEntries } from './bench/audit';
import { benchPort, findOrBuildServer, measureCheckIns, startServer, stopServer, type HttpFigures } from './bench/http-check-ins';
import { measureNaiveScan, type NaiveFigures } from './bench/naive-scan';
import { benchPositions, regionAreaKm2 } from './bench/parcels';
import { measureFieldOffline } from './bench/field-offline';
import { auditTargets, checkInTargets, scaleTargets, fieldTargets, report, type AuditResults, type BenchResults, type FieldResults, type PgbenchResults } from './bench/report';
import { describeParcels, prepareMembers, prewarm, seedBench } from './bench/seed';
import { appCandidateScript, bareLookupScript, runPgbench } from './bench/pgbench';
import { coveringCounts, measureSql } from './bench/sql-lookup';
import { measureWithWrk, type WrkResults } from './bench/wrk-check-ins';
import { measureScale } from './bench/scale';
import { databaseUrls, ensureAppRole, ensureDatabase, ensurePostgres, localDir, localSecret, root, say, startCluster } from './lib/setup.mjs';

const setting = (name: string, fallback: number) => {
  const value = Number(process.env[name] ?? fallback);
  if (!Number.isFinite(value) || value <= 0) throw new Error(`${name} must be a positive number`);
  return Math.floor(value);
};
const parcelTarget = setting('BENCH_PARCELS', 100_000);
const requests = setting('BENCH_REQUESTS', 5000);
const sqlQueries = setting('BENCH_SQL_QUERIES', 5000);
const naivePoints = setting('BENCH_NAIVE_POINTS', 20);
const entryTarget = setting('BENCH_ENTRIES', 1_000_000);
const concurrency = setting('BENCH_CONCURRENCY', 8);
const maxMs = setting('BENCH_MAX_SECONDS', 60) * 1000;
const pgPort = setting('TALLYWOOD_BENCH_PG_PORT', 54349);
const loadSeconds = setting('BENCH_SECONDS', 20);
const wrkThreads = setting('BENCH_WRK_THREADS', concurrency);
/** pgbench's threads: one per core, as many as the machine's (the brief's `-j 2` on two cores). */
const pgbenchThreads = Math.min(concurrency, Math.max(1, cpus().length));
const profiledRun = process.env.BENCH_PROFILE ?? 'check-ins';
if (profiledRun !== 'check-ins' && profiledRun !== 'entries') throw new Error('BENCH_PROFILE is check-ins (the default) or entries');
const flags = new Set(process.argv.slice(2));
for (const flag of flags) if (!['--check-ins', '--build', '--scale'].includes(flag)) throw new Error(`unknown flag ${flag}: the bench knows --check-ins, --build and --scale`);
const checkInsOnly = flags.has('--check-ins');
const leftOut = 'left out (--check-ins)';
const started = performance.now();

ensurePostgres();
// A database server's usual share of memory for its buffers (a quarter of it, at most 4 GB), as
// PostgreSQL's manual suggests for a dedicated server, so the prewarmed relations stay in them.
const sharedBuffersMb = Math.min(4096, Math.floor(totalmem() / 2 ** 20 / 4));
const clusterDir = join(localDir, 'pg-bench');
const stopDatabase = startCluster({ dir: clusterDir, port: pgPort, settings: [`shared_buffers=${sharedBuffersMb}MB`] });
ensureDatabase({ port: pgPort, name: 'tallywood_bench' });
const password = localSecret('database-password');
ensureAppRole({ port: pgPort, password });
// The bench migrates, seeds and measures its statements as the tables' owner (the cluster's
// superuser); the app it starts signs in as the app's role, as `npm start`'s does.
const { owner: databaseUrl, app: appDatabaseUrl } = databaseUrls({ port: pgPort, name: 'tallywood_bench', password, dir: clusterDir });

/** The running cluster's postmaster: the first line of postmaster.pid (PostgreSQL manual §19.3). */
function postmasterPid(dir: string): number | undefined {
  try {
    const pid = Number(readFileSync(join(dir, 'postmaster.pid'), 'utf8').split('\n')[0]);
    return Number.isInteger(pid) && pid > 0 ? pid : undefined;
  } catch {
    return undefined;
  }
}

/** Thrown past a part of the bench that --check-ins leaves out. */
class Skipped extends Error {}

let server: ChildProcess | null = null;
const sql = postgres(databaseUrl, { max: concurrency, onnotice: () => {} });
let exitCode = 0;

async function cleanUp() {
  await stopServer(server);
  await sql.end({ timeout: 5 });
  stopDatabase();
}
process.once('SIGINT', () => void cleanUp().finally(() => process.exit(130)));

try {
  const migrator = createDb(databaseUrl, { max: 1 });
  await applyMigrations(migrator, join(root, 'drizzle'));
  await closeDb(migrator);

  const seed = await seedBench(sql, parcelTarget, say);
  say(seed.seeded > 0 ? `seeded ${seed.seeded} parcels in ${(seed.ms / 1000).toFixed(1)} s` : `${seed.existing} bench parcels already there; nothing seeded`);
  const parcels = await describeParcels(sql, regionAreaKm2());
  say(`pre-warmed ${await prewarm(sql)} blocks of the parcels, permits and allowances into PostgreSQL's buffers`);

  say(`bare SQL lookups: ${sqlQueries} from ${concurrency} connections…`);
  const sqlFigures = await measureSql(sql, benchPositions(1, sqlQueries + 1000, parcelTarget), { concurrency, count: sqlQueries, maxMs });
  console.log(`\nEXPLAIN ANALYZE of the bare lookup:\n${sqlFigures.plan}\n`);

  let naive: NaiveFigures | null = null;
  if (!checkInsOnly) {
    say(`naive turf scan: every parcel in memory, ${naivePoints} positions…`);
    const naivePositions = benchPositions(2, naivePoints, parcelTarget);
    naive = await measureNaiveScan(sql, naivePositions, await coveringCounts(sql, naivePositions));
  }

  // pgbench: the bare lookup above, and the statement the check-in itself sends for its candidates
  // (as the first bench member), at the same concurrency, random positions in the seeded region.
  let pgbench: PgbenchResults;
  try {
    const [member] = await sql<{ id: string; club_ids: string[] }[]>`
      select u.id, coalesce(array_agg(m.club_id::text) filter (where m.club_id is not null), '{}') as club_ids
      from users u left join club_memberships m on m.user_id = u.id and m.state = 'active' where u.id = 'bench-member-00' group by u.id`;
    if (!member) throw new Error('bench-member-00 is missing');
    const common = { port: pgPort, database: 'tallywood_bench', user: 'app', clients: concurrency, threads: pgbenchThreads, seconds: loadSeconds };
    say(`pgbench: the bare candidate lookup, -c ${concurrency} -j ${pgbenchThreads} -T ${loadSeconds}…`);
    const bare = await runPgbench({ ...common, label: 'bare', script: bareLookupScript(parcelTarget) });
    say(`pgbench: the check-in's own candidate statement (measuredCandidatesQuery), -c ${concurrency} -j ${pgbenchThreads} -T ${loadSeconds}…`);
    const app = await runPgbench({ ...common, label: 'check-in-candidates', script: appCandidateScript({ id: member.id, clubIds: member.club_ids }, parcelTarget) });
    pgbench = { available: true, bare, app };
  } catch (error) {
    exitCode = 1;
    pgbench = { available: false, reason: error instanceof Error ? error.message : String(error) };
    console.log(`\n*** pgbench did not run: ${pgbench.reason} ***\n`);
  }

  const tokens = await prepareMembers(sql, concurrency);
  let http: HttpFigures & { entry: string | null };
  let entry: string | null = null;
  try {
    entry = findOrBuildServer(say, { rebuild: flags.has('--build') }).entry;
    if (checkInsOnly) throw new Skipped();
    say(`starting ${entry.replace(`${root}/`, '')} on 127.0.0.1:4341 against the bench database…`);
    server = await startServer(entry, appDatabaseUrl);
    say(`check-ins over HTTP: ${requests} from ${concurrency} clients…`);
    http = { ...(await measureCheckIns(server.pid, tokens, benchPositions(3, requests + 1000, parcelTarget), { concurrency, count: requests, maxMs })), entry };
  } catch (error) {
    http = error instanceof Skipped ? { available: false, status: 404, reason: leftOut, entry } : { available: false, status: 0, reason: `the app could not be started or reached: ${error instanceof Error ? error.message : error}`, entry };
  }
  let field: FieldResults = { available: false, reason: checkInsOnly ? leftOut : 'the app was not running' };
  if (http.available && entry) {
    say('the Field page in Chromium, and the offline verdict on a pack of 500 parcels with the CPU slowed 4×…');
    try {
      const clientDir = join(entry, '..', '..', 'client');
      const centre = benchPositions(4, 1, parcelTarget)[0] as { longitude: number; latitude: number };
      field = { available: true, ...(await measureFieldOffline(sql, { databaseUrl, baseUrl: `http://127.0.0.1:${benchPort}`, clientDir, sessionToken: tokens[0] as string, centre: [centre.longitude, centre.latitude] })) };
    } catch (error) {
      field = { available: false, reason: error instanceof Error ? error.message : String(error) };
    }
  }
  await stopServer(server);
  server = null;
  let wrk: WrkResults = { available: false, reason: 'the app could not be built or found' };
  if (entry) {
    wrk = await measureWithWrk({
      entry,
      databaseUrl: appDatabaseUrl,
      tokens,
      positions: benchPositions(5, Math.max(1000, concurrency * 500), parcelTarget),
      entryPositions: benchPositions(6, concurrency * 20, parcelTarget).filter((p) => p.kind === 'in-parcel'),
      connections: concurrency,
      threads: wrkThreads,
      seconds: loadSeconds,
      databasePid: postmasterPid(clusterDir),
      profile: profiledRun,
      log: say,
    });
  }
  if (!wrk.available) {
    exitCode = 1;
    console.log(`\n*** The check-in was not measured with wrk: ${wrk.reason} ***\n`);
  }
  if (!http.available) {
    console.log(`\n*** The check-in endpoint was not measured: ${http.reason}. The SQL and turf figures below stand on their own. ***\n`);
    if (http.status !== 404) exitCode = 1;
  }

  let scale: BenchResults['scale'] = null;
  if (flags.has('--scale') && entry) {
    try {
      scale = { available: true, ...(await measureScale({ port: pgPort, dir: clusterDir, password, entry, concurrency, threads: wrkThreads, seconds: loadSeconds, log: say })) };
    } catch (error) {
      exitCode = 1;
      scale = { available: false, reason: error instanceof Error ? error.message : String(error) };
      console.log(`\n*** The scale run did not finish: ${scale.reason} ***\n`);
    }
  }

  let audit: AuditResults;
  try {
    if (checkInsOnly) throw new Skipped();
    const entries = await seedEntries(sql, entryTarget, say);
    say(entries.seeded > 0 ? `seeded ${entries.seeded} harvest entries in ${(entries.ms / 1000).toFixed(1)} s` : `${entries.entries} bench harvest entries already there; nothing seeded`);
    say(`club audit and season reports over ${entries.entries} harvest entries…`);
    audit = { available: true, seeding: { seeded: entries.seeded, ms: entries.ms, limitsAdded: entries.limitsAdded }, ...(await measureAudit(databaseUrl, { clubId: entries.clubId, parcelId: entries.parcelId, maxMs })) };
    for (const [i, p] of audit.plans.entries()) console.log(`\nEXPLAIN (ANALYZE, BUFFERS) of the audit's statement ${i + 1} of ${audit.plans.length} over the kept totals:\n${p.plan}\n`);
  } catch (error) {
    if (error instanceof Skipped) audit = { available: false, reason: leftOut };
    else {
      exitCode = 1;
      audit = { available: false, reason: error instanceof Error ? error.message : String(error) };
      console.log(`\n*** The audit and season report were not measured: ${audit.reason} ***\n`);
    }
  }

  const endpointP50 = http.available ? http.concurrent.p50 : null;
  const endpointOverSqlP50 = endpointP50 === null ? null : endpointP50 / sqlFigures.concurrent.p50;
  const wrkOverPgbenchP50 = wrk.available && pgbench.available ? wrk.checkIns.p50 / pgbench.bare.p50 : null;
  const wrkOverAppStatementP50 = wrk.available && pgbench.available ? wrk.checkIns.p50 / pgbench.app.p50 : null;
  const cpuOverFloor = wrk.available && wrk.checkIns.serverCpuMsPerRequest !== null && wrk.floor.serverCpuMsPerRequest ? wrk.checkIns.serverCpuMsPerRequest / wrk.floor.serverCpuMsPerRequest : null;
  const [versions] = await sql<{ postgres: string; postgis: string }[]>`select current_setting('server_version') as postgres, postgis_lib_version() as postgis`;
  const results: BenchResults = {
    at: new Date().toISOString(),
    machine: {
      cpus: cpus().length,
      cpuModel: cpus()[0]?.model ?? 'unknown',
      memoryGb: Math.round(totalmem() / 2 ** 30),
      node: process.version,
      postgres: versions?.postgres ?? '?',
      postgis: versions?.postgis ?? '?',
    },
    parcels,
    seeding: { seeded: seed.seeded, ms: seed.ms },
    sql: sqlFigures,
    naive,
    http,
    wrk,
    pgbench,
    audit,
    field,
    scale,
    ratios: {
      endpointOverSqlP50,
      wrkOverPgbenchP50,
      wrkOverAppStatementP50,
      cpuOverFloor,
      naiveOverEndpointP50: endpointP50 === null || !naive ? null : naive.msPerLookup / endpointP50,
      naiveOverSqlP50: naive ? naive.msPerLookup / sqlFigures.concurrent.p50 : null,
    },
    targets: [
      ...checkInTargets(wrk, wrkOverPgbenchP50, cpuOverFloor),
      ...scaleTargets(scale, pgbench, wrk),
      ...(checkInsOnly ? [] : [...auditTargets(audit), ...fieldTargets(field)]),
    ],
    totalMs: performance.now() - started,
  };
  console.log(`\n${report(results, join(localDir, 'bench'))}\n`);
  say('results written to .local/bench/results.json and .local/bench/results.md');
} catch (error) {
  exitCode = 1;
  console.error(error instanceof Error ? (error.stack ?? error.message) : error);
} finally {
  await cleanUp();
}
process.exit(exitCode);
