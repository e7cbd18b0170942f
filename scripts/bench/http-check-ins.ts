import { spawn, type ChildProcess } from 'node:child_process';
import { closeSync, existsSync, mkdirSync, openSync, statSync } from 'node:fs';
import { Agent, request } from 'node:http';
import { dirname, join } from 'node:path';
import { bin, localDir, root, run, startChild, waitForHttp } from '../lib/setup.mjs';
import type { BenchPosition } from './parcels';
import { runConcurrently, summarise, type Latencies } from './stats';
import { cpuSeconds } from './wrk';

export const benchPort = 4341;
const origin = `http://127.0.0.1:${benchPort}`;

/**
 * The newest app build there is (`npm start`'s dist/ or `npm test`'s .local/test-dist); with none,
 * a build of our own into .local/bench-dist (astro.config.mjs reads TALLYWOOD_OUT_DIR).
 */
export function findOrBuildServer(log: (line: string) => void, { rebuild = false }: { rebuild?: boolean } = {}): { entry: string; built: boolean } {
  // BENCH_SERVER_ENTRY: another build's server/entry.mjs, to measure an earlier commit with this bench.
  const given = process.env.BENCH_SERVER_ENTRY;
  if (given) {
    if (!existsSync(given)) throw new Error(`BENCH_SERVER_ENTRY names ${given}, which does not exist`);
    return { entry: given, built: false };
  }
  const candidates = [join(root, 'dist', 'server', 'entry.mjs'), join(localDir, 'test-dist', 'server', 'entry.mjs'), join(localDir, 'bench-dist', 'server', 'entry.mjs')]
    .filter((file) => existsSync(file))
    .sort((a, b) => statSync(b).mtimeMs - statSync(a).mtimeMs);
  const found = candidates[0];
  if (found && !rebuild) return { entry: found, built: false };
  const outDir = join(localDir, 'bench-dist');
  log(`${rebuild ? 'building this checkout' : 'no app build found; building'} into .local/bench-dist (astro build)…`);
  run(bin('astro'), ['build'], { env: { ...process.env, TALLYWOOD_OUT_DIR: outDir }, stdio: ['ignore', 'ignore', 'inherit'] });
  return { entry: join(outDir, 'server', 'entry.mjs'), built: true };
}

/**
 * Starts the app on the bench port; `nodeOptions` go to node before the script (`--cpu-prof`, for
 * one). With `logFile`, the app writes its log (a line per request) straight into that file, as it
 * would into a log collector, rather than through a pipe to this process: the bench relaying every
 * line would take CPU from the two cores being measured, and Node writes to a pipe synchronously.
 */
export async function startServer(entry: string, databaseUrl: string, { nodeOptions = [], logFile }: { nodeOptions?: string[]; logFile?: string } = {}): Promise<ChildProcess> {
  // Served as production serves it (scripts/serve.mjs), in local mode: the bench's fakes and keys are the local ones.
  const args = [...nodeOptions, join(root, 'scripts', 'serve.mjs')];
  const env: Record<string, string> = {
    TALLYWOOD_OUT_DIR: dirname(dirname(entry)),
    TALLYWOOD_LOCAL_MODE: 'true',
    DATABASE_URL: databaseUrl,
    HOST: '127.0.0.1',
    PORT: String(benchPort),
    AUTH_SECRET: 'bench',
    // The check-in path sends no mail and takes no payment; these only satisfy the env schema.
    MAIL_CATCHER_SMTP_PORT: '2545',
    MAIL_CATCHER_HTTP_URL: 'http://127.0.0.1:2595',
    STRIPE_API_URL: 'http://127.0.0.1:2615',
    STRIPE_SECRET_KEY: 'sk_test_tallywood_bench',
    STRIPE_WEBHOOK_SECRET: 'whsec_tallywood_bench',
    UPLOADS_DIR: join(localDir, 'bench-uploads'),
    // As many app processes as `npm start` runs (TALLYWOOD_PROCESSES, one per core unless set); the
    // profiled run has one, so its single profile holds every sample.
    TALLYWOOD_PROCESSES: nodeOptions.length > 0 ? '1' : (process.env.TALLYWOOD_PROCESSES ?? ''),
  };
  let server: ChildProcess;
  if (logFile) {
    mkdirSync(dirname(logFile), { recursive: true });
    const fd = openSync(logFile, 'w');
    server = spawn('node', args, { cwd: root, env: { ...process.env, ...env }, stdio: ['ignore', fd, fd] });
    closeSync(fd);
  } else {
    server = startChild('app', 'node', args, env);
  }
  await waitForHttp(`${origin}/api/health`, 60);
  return server;
}

export async function stopServer(server: ChildProcess | null) {
  if (!server || server.exitCode !== null || server.signalCode !== null) return;
  const exited = new Promise((resolve) => server.once('exit', resolve));
  server.kill('SIGTERM');
  const timer = setTimeout(() => server.kill('SIGKILL'), 5000);
  await exited;
  clearTimeout(timer);
}

type Answer = { status: number; body: string };


function get(agent: Agent, path: string): Promise<Answer> {
  return new Promise((resolve, reject) => {
    const req = request(`${origin}${path}`, { method: 'GET', agent }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (chunk: Buffer) => chunks.push(chunk));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, body: Buffer.concat(chunks).toString('utf8') }));
      res.on('error', reject);
    });
    req.on('error', reject);
    req.end();
  });
}

function postCheckIn(agent: Agent, cookie: string, { longitude, latitude, accuracyM }: BenchPosition): Promise<Answer> {
  const payload = JSON.stringify({ longitude, latitude, accuracyM });
  return new Promise((resolve, reject) => {
    const req = request(
      `${origin}/api/check-ins`,
      { method: 'POST', agent, headers: { 'content-type': 'application/json', 'content-length': Buffer.byteLength(payload), origin, cookie } },
      (res) => {
        const chunks: Buffer[] = [];
        res.on('data', (chunk: Buffer) => chunks.push(chunk));
        res.on('end', () => resolve({ status: res.statusCode ?? 0, body: Buffer.concat(chunks).toString('utf8') }));
        res.on('error', reject);
      },
    );
    req.on('error', reject);
    req.end(payload);
  });
}

export type HttpFigures =
  | { available: false; status: number; reason: string }
  | {
      available: true;
      concurrent: Latencies & { concurrency: number; perSecond: number; failures: number; firstError: string | null; serverCpuMsPerRequest: number | null };
      serial: Latencies;
      /** GET /api/me signed out: a 401 from the middleware and endpoint with no database work, the server's floor. */
      floor: Latencies & { perSecond: number };
      statuses: Record<string, number>;
      verdicts: Record<string, number>;
    };

/**
 * POST /api/check-ins on loopback: a probe, a warm-up, `count` requests from `concurrency` clients
 * (each signed in as a club member of its own), then a serial pass.
 */
export async function measureCheckIns(
  serverPid: number | undefined,
  sessionTokens: string[],
  positions: BenchPosition[],
  { concurrency, count, maxMs }: { concurrency: number; count: number; maxMs: number },
): Promise<HttpFigures> {
  const agent = new Agent({ keepAlive: true, maxSockets: concurrency });
  const cookies = sessionTokens.map((token) => `authjs.session-token=${token}`);
  const cookieOf = (worker: number) => cookies[worker % cookies.length] as string;
  try {
    const probe = await postCheckIn(agent, cookieOf(0), positions[0] as BenchPosition);
    if (probe.status === 404) return { available: false, status: 404, reason: 'POST /api/check-ins answered 404: this build has no check-in endpoint yet' };
    if (probe.status < 200 || probe.status >= 300) return { available: false, status: probe.status, reason: `POST /api/check-ins answered ${probe.status}: ${probe.body.slice(0, 300)}` };

    const statuses: Record<string, number> = {};
    const verdicts: Record<string, number> = {};
    const send = async (p: BenchPosition, worker: number, tally: boolean) => {
      const answer = await postCheckIn(agent, cookieOf(worker), p);
      if (tally) {
        statuses[answer.status] = (statuses[answer.status] ?? 0) + 1;
        const verdict = /"verdict":"([a-z-]+)"/.exec(answer.body)?.[1] ?? 'none';
        verdicts[verdict] = (verdicts[verdict] ?? 0) + 1;
      }
      if (answer.status >= 300) throw new Error(`HTTP ${answer.status}: ${answer.body.slice(0, 200)}`);
    };
    await runConcurrently(positions, { concurrency, count: 300, maxMs: 30_000 }, (p, worker) => send(p, worker, false));
    const cpuBefore = cpuSeconds(serverPid);
    const run = await runConcurrently(positions.slice(300), { concurrency, count, maxMs }, (p, worker) => send(p, worker, true));
    const cpuAfter = cpuSeconds(serverPid);
    const serial = await runConcurrently(positions.slice(300 + count), { concurrency: 1, count: Math.min(500, count), maxMs: maxMs / 2 }, (p, worker) => send(p, worker, false));
    const floor = await runConcurrently(positions, { concurrency, count, maxMs: maxMs / 2 }, async () => {
      const answer = await get(agent, '/api/me');
      if (answer.status !== 401) throw new Error(`GET /api/me signed out answered ${answer.status}`);
    });
    return {
      available: true,
      concurrent: {
        ...summarise(run.latencies),
        concurrency,
        perSecond: run.latencies.length / (run.wallMs / 1000),
        failures: run.failures,
        firstError: run.firstError,
        serverCpuMsPerRequest: cpuBefore === null || cpuAfter === null ? null : ((cpuAfter - cpuBefore) * 1000) / Math.max(1, run.latencies.length),
      },
      serial: summarise(serial.latencies),
      floor: { ...summarise(floor.latencies), perSecond: floor.latencies.length / (floor.wallMs / 1000) },
      statuses,
      verdicts,
    };
  } finally {
    agent.destroy();
  }
}
