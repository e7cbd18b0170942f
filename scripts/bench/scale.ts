import { join } from 'node:path';
import postgres from 'postgres';
import { closeDb, createDb } from '../../src/db/client';
import { applyMigrations } from '../../src/db/migrations';
import { databaseUrls, ensureDatabase, localDir, root } from '../lib/setup.mjs';
import { benchPort, startServer, stopServer } from './http-check-ins';
import { benchPositions } from './parcels';
import { appCandidateScript, bareLookupScript, runPgbench, type PgbenchFigures } from './pgbench';
import { prepareMembers, prewarm, seedBench } from './seed';
import { runWrk, type WrkFigures } from './wrk';
import { startUpJobsOver } from './wrk-check-ins';

export const scaleParcels = 1_000_000;

export type ScaleFigures = {
  parcels: number;
  seeding: { seeded: number; ms: number };
  bare: PgbenchFigures;
  app: PgbenchFigures;
  checkIns: WrkFigures;
};

type Options = { port: number; dir: string; password: string; entry: string; concurrency: number; threads: number; seconds: number; log: (line: string) => void };

/**
 * `npm run bench -- --scale`: the same register grown to 1 000 000 parcels (ten times the land,
 * tileOffset in scripts/bench/parcels.ts) in a database of its own on the bench cluster
 * (tallywood_bench_1m, seeded once and kept), and there the bare candidate query and the check-in's
 * candidate statement under pgbench and the check-in under wrk, as at 100 000.
 */
export async function measureScale({ port, dir, password, entry, concurrency, threads, seconds, log }: Options): Promise<ScaleFigures> {
  const name = 'tallywood_bench_1m';
  ensureDatabase({ port, name });
  const { owner, app } = databaseUrls({ port, name, password, dir });
  const migrator = createDb(owner, { max: 1 });
  await applyMigrations(migrator, join(root, 'drizzle'));
  await closeDb(migrator);
  const sql = postgres(owner, { max: concurrency, onnotice: () => {} });
  try {
    const seed = await seedBench(sql, scaleParcels, log);
    log(seed.seeded > 0 ? `seeded ${seed.seeded} parcels in ${(seed.ms / 1000).toFixed(1)} s` : `${seed.existing} bench parcels already in ${name}`);
    if (seed.seeded > 0) await sql`vacuum analyze`;
    log(`pre-warmed ${await prewarm(sql)} blocks of ${name}`);
    const [member] = await sql<{ id: string; club_ids: string[] }[]>`
      select u.id, coalesce(array_agg(m.club_id::text) filter (where m.club_id is not null), '{}') as club_ids
      from users u left join club_memberships m on m.user_id = u.id and m.state = 'active' where u.id = 'bench-member-00' group by u.id`;
    if (!member) throw new Error('bench-member-00 is missing');
    const common = { port, database: name, user: 'app', clients: concurrency, threads: Math.min(concurrency, 2), seconds };
    log(`pgbench at ${scaleParcels} parcels: the bare candidate lookup and the check-in's candidate statement…`);
    const bare = await runPgbench({ ...common, label: 'bare-1m', script: bareLookupScript(scaleParcels) });
    const appStatement = await runPgbench({ ...common, label: 'check-in-candidates-1m', script: appCandidateScript({ id: member.id, clubIds: member.club_ids }, scaleParcels) });
    const tokens = await prepareMembers(sql, concurrency);
    const logFile = join(localDir, 'bench', 'app-wrk-1m.log');
    const server = await startServer(entry, app, { logFile });
    try {
      await startUpJobsOver(logFile, log);
      const load = {
        url: `http://127.0.0.1:${benchPort}/api/check-ins`, method: 'POST' as const, cookies: tokens.map((t) => `authjs.session-token=${t}`),
        positions: benchPositions(5, Math.max(1000, concurrency * 500), scaleParcels), threads, connections: concurrency, serverPid: server.pid,
      };
      log(`wrk at ${scaleParcels} parcels: warm-up, then POST /api/check-ins for ${seconds} s…`);
      await runWrk({ ...load, seconds: 3, label: 'warm-up-1m' });
      const checkIns = await runWrk({ ...load, seconds, label: 'check-ins-1m' });
      return { parcels: scaleParcels, seeding: { seeded: seed.seeded, ms: seed.ms }, bare, app: appStatement, checkIns };
    } finally {
      await stopServer(server);
    }
  } finally {
    await sql.end({ timeout: 5 });
  }
}
