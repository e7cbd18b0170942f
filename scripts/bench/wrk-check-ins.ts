import type { ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { localDir } from '../lib/setup.mjs';
import { topSelfTime, type ProfileFigures } from './cpu-profile';
import { benchPort, startServer, stopServer } from './http-check-ins';
import type { BenchPosition } from './parcels';
import { runWrk, type WrkFigures } from './wrk';

export type WrkResults =
  | {
      available: true;
      /** POST /api/check-ins from wrk, each connection a bench member with its own session and positions. */
      checkIns: WrkFigures;
      /** GET /api/me signed out (a 401 with no database work): the framework's floor. */
      floor: WrkFigures;
      /** The same check-in load (or with BENCH_PROFILE=entries, the entries) again, on a server started with `node --cpu-prof`: its figures show the profiler's cost. */
      profiled: WrkFigures & { of: ProfiledRun };
      profile: ProfileFigures;
      /** POST /api/harvest-entries from wrk: each connection a bench member recording on a parcel of their own. */
      entries: (WrkFigures & { available: true; parcels: number }) | { available: false; reason: string };
    }
  | { available: false; reason: string };

type Options = {
  entry: string;
  databaseUrl: string;
  tokens: string[];
  positions: BenchPosition[];
  /** Positions well inside bench parcels (more than connections), where the members check in to record entries. */
  entryPositions: BenchPosition[];
  connections: number;
  threads: number;
  seconds: number;
  /** The bench cluster's postmaster, whose CPU (with its backends') each run also counts. */
  databasePid?: number;
  /** Which load the profiled run repeats. */
  profile: ProfiledRun;
  log: (line: string) => void;
};

export type ProfiledRun = 'check-ins' | 'entries';

/**
 * Each app process keeps the parcels' shared facts it has read (loadMeasuredParcelsNear), as a server
 * in service has kept those of the land its foragers use. The warm-up sends each position to each
 * of two processes about once, so the runs after it measure such a server; BENCH_WARM_UP_SECONDS=3 measures a cold one.
 */
const warmUpSeconds = Number(process.env.BENCH_WARM_UP_SECONDS ?? 60);

/**
 * Waits until the jobs the server runs as it starts (date changes and reminders, over every bench
 * parcel, with their retries) have ended, done or failed, and no job has logged for 15 s, so the
 * figures are a running server's (at most three minutes).
 */
export async function startUpJobsOver(logFile: string, log: (line: string) => void): Promise<void> {
  const started = performance.now();
  const lines = () => (existsSync(logFile) ? readFileSync(logFile, 'utf8').split('\n') : []);
  const ended = (all: string[], job: string) => all.some((line) => line.includes(`"job":"${job}"`) && /"msg":"job (done|failed)"/.test(line));
  let [jobLines, quietSince] = [-1, performance.now()];
  for (;;) {
    const all = lines();
    const count = all.filter((line) => line.includes('"job":"')).length;
    if (count !== jobLines) [jobLines, quietSince] = [count, performance.now()];
    if (ended(all, 'date-changes') && ended(all, 'reminders') && performance.now() - quietSince >= 15_000) break;
    if (performance.now() - started > 180_000) {
      log('the start-up jobs had not settled after 3 minutes; measuring anyway');
      return;
    }
    await new Promise((resolve) => setTimeout(resolve, 500));
  }
  log(`the start-up jobs ended and were quiet for 15 s, ${((performance.now() - started) / 1000).toFixed(1)} s after the server answered`);
}

/**
 * The check-in under wrk (a C load generator: the load does not take the app's event loop or much
 * of its CPU): a warm-up, the measured run, and the signed-out floor on a plain server; then the
 * check-in run again on a server started with `--cpu-prof`, whose profile is read for the samples
 * of that run only.
 */
export async function measureWithWrk({ entry, databaseUrl, tokens, positions, entryPositions, connections, threads, seconds, databasePid, profile: profiledRun, log }: Options): Promise<WrkResults> {
  const url = `http://127.0.0.1:${benchPort}`;
  const cookies = tokens.map((token) => `authjs.session-token=${token}`);
  const load = { cookies, positions, threads, connections, databasePid };
  let server: ChildProcess | null = null;
  try {
    server = await startServer(entry, databaseUrl, { logFile: join(localDir, 'bench', 'app-wrk.log') });
    await startUpJobsOver(join(localDir, 'bench', 'app-wrk.log'), log);
    log(`wrk: warm-up, ${warmUpSeconds} s…`);
    await runWrk({ ...load, url: `${url}/api/check-ins`, method: 'POST', seconds: warmUpSeconds, serverPid: server.pid, label: 'warm-up' });
    log(`wrk: POST /api/check-ins, ${connections} connections on ${threads} threads, ${seconds} s…`);
    const checkIns = await runWrk({ ...load, url: `${url}/api/check-ins`, method: 'POST', seconds, serverPid: server.pid, label: 'check-ins' });
    log(`wrk: GET /api/me signed out (the floor), ${seconds} s…`);
    const floor = await runWrk({ ...load, cookies: [], positions: [], url: `${url}/api/me`, method: 'GET', seconds, serverPid: server.pid, label: 'floor' });
    const floorStatuses = Object.keys(floor.statuses);
    if (floorStatuses.some((s) => s !== '401')) throw new Error(`GET /api/me signed out answered ${JSON.stringify(floor.statuses)}, not only 401`);
    let entries: Extract<WrkResults, { available: true }>['entries'];
    try {
      const bodies = await openVisits(url, cookies.slice(0, connections), entryPositions);
      log(`wrk: POST /api/harvest-entries, ${connections} foragers each on a parcel of their own, ${seconds} s…`);
      const figures = await runWrk({ ...load, cookies: cookies.slice(0, connections), bodies, url: `${url}/api/harvest-entries`, method: 'POST', seconds, serverPid: server.pid, label: 'entries' });
      entries = { available: true, parcels: bodies.length, ...figures };
    } catch (error) {
      entries = { available: false, reason: error instanceof Error ? error.message : String(error) };
    }
    await stopServer(server);
    server = null;

    const profileDir = join(localDir, 'bench', 'cpu-profile');
    rmSync(profileDir, { recursive: true, force: true });
    mkdirSync(profileDir, { recursive: true });
    log(`wrk: the ${profiledRun === 'entries' ? 'entries' : 'check-in'} run again on a server under node --cpu-prof…`);
    server = await startServer(entry, databaseUrl, { nodeOptions: ['--cpu-prof', `--cpu-prof-dir=${profileDir}`], logFile: join(localDir, 'bench', 'app-wrk-profiled.log') });
    await startUpJobsOver(join(localDir, 'bench', 'app-wrk-profiled.log'), log);
    // The entries are recorded on visits the members open again (or continue) on this server.
    const profiledLoad =
      profiledRun === 'entries'
        ? { ...load, cookies: cookies.slice(0, connections), bodies: await openVisits(url, cookies.slice(0, connections), entryPositions), url: `${url}/api/harvest-entries` }
        : { ...load, url: `${url}/api/check-ins` };
    await runWrk({ ...profiledLoad, method: 'POST', seconds: warmUpSeconds, serverPid: server.pid, label: 'warm-up' });
    const started = performance.now();
    const profiled = { ...(await runWrk({ ...profiledLoad, method: 'POST', seconds, serverPid: server.pid, label: 'profiled' })), of: profiledRun };
    // serve.mjs exits on SIGTERM; node writes the profile as it exits.
    await stopServer(server);
    server = null;
    const profile = topSelfTime(profileDir, performance.now() - started);
    return { available: true, checkIns, floor, profiled, profile, entries };
  } catch (error) {
    return { available: false, reason: error instanceof Error ? error.message : String(error) };
  } finally {
    await stopServer(server);
  }
}

/**
 * Each member checks in on a parcel no other member is on (clear, so a visit opens), and gets the
 * body of an entry to record there again and again: 0.1 g of the bench species, a key of its own
 * each time (`@KEY@`, filled by the Lua script). The bench allowance's limit is 2 kg a day.
 */
async function openVisits(url: string, cookies: string[], positions: BenchPosition[]): Promise<string[]> {
  const taken = new Set<string>();
  const bodies: string[] = [];
  let next = 0;
  for (const cookie of cookies) {
    let body: string | null = null;
    while (!body && next < positions.length) {
      const { longitude, latitude } = positions[next++] as BenchPosition;
      const response = await fetch(`${url}/api/check-ins`, {
        method: 'POST',
        headers: { cookie, origin: url, 'content-type': 'application/json' },
        body: JSON.stringify({ longitude, latitude, accuracyM: 3 }),
      });
      const answer = (await response.json()) as { verdict?: string; visitId?: string | null; parcel?: { id: string } | null; species?: { speciesId: string; inSeason: boolean }[] };
      const species = answer.species?.find((s) => s.inSeason);
      if (answer.verdict !== 'clear' || !answer.visitId || !answer.parcel || taken.has(answer.parcel.id) || !species) continue;
      taken.add(answer.parcel.id);
      body = JSON.stringify({ idempotencyKey: '@KEY@', visitId: answer.visitId, speciesId: species.speciesId, method: 'pick', quantities: [{ quantity: '0.1', unit: 'g' }] });
    }
    if (!body) throw new Error('could not open a visit on a parcel of its own for every bench member');
    bodies.push(body);
  }
  return bodies;
}
