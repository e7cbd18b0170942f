import type { ChildProcess } from 'node:child_process';
import { mkdirSync, rmSync } from 'node:fs';
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
      /** The same check-in load again, on a server started with `node --cpu-prof`: its figures show the profiler's cost. */
      profiled: WrkFigures;
      profile: ProfileFigures;
    }
  | { available: false; reason: string };

type Options = {
  entry: string;
  databaseUrl: string;
  tokens: string[];
  positions: BenchPosition[];
  connections: number;
  threads: number;
  seconds: number;
  log: (line: string) => void;
};

const warmUpSeconds = 3;

/**
 * The check-in under wrk (a C load generator: the load does not take the app's event loop or much
 * of its CPU): a warm-up, the measured run, and the signed-out floor on a plain server; then the
 * check-in run again on a server started with `--cpu-prof`, whose profile is read for the samples
 * of that run only.
 */
export async function measureWithWrk({ entry, databaseUrl, tokens, positions, connections, threads, seconds, log }: Options): Promise<WrkResults> {
  const url = `http://127.0.0.1:${benchPort}`;
  const cookies = tokens.map((token) => `authjs.session-token=${token}`);
  const load = { cookies, positions, threads, connections };
  let server: ChildProcess | null = null;
  try {
    server = await startServer(entry, databaseUrl, { logFile: join(localDir, 'bench', 'app-wrk.log') });
    log(`wrk: warm-up, ${warmUpSeconds} s…`);
    await runWrk({ ...load, url: `${url}/api/check-ins`, method: 'POST', seconds: warmUpSeconds, serverPid: server.pid, label: 'warm-up' });
    log(`wrk: POST /api/check-ins, ${connections} connections on ${threads} threads, ${seconds} s…`);
    const checkIns = await runWrk({ ...load, url: `${url}/api/check-ins`, method: 'POST', seconds, serverPid: server.pid, label: 'check-ins' });
    log(`wrk: GET /api/me signed out (the floor), ${seconds} s…`);
    const floor = await runWrk({ ...load, cookies: [], positions: [], url: `${url}/api/me`, method: 'GET', seconds, serverPid: server.pid, label: 'floor' });
    const floorStatuses = Object.keys(floor.statuses);
    if (floorStatuses.some((s) => s !== '401')) throw new Error(`GET /api/me signed out answered ${JSON.stringify(floor.statuses)}, not only 401`);
    await stopServer(server);
    server = null;

    const profileDir = join(localDir, 'bench', 'cpu-profile');
    rmSync(profileDir, { recursive: true, force: true });
    mkdirSync(profileDir, { recursive: true });
    log('wrk: the check-in run again on a server under node --cpu-prof…');
    server = await startServer(entry, databaseUrl, { nodeOptions: ['--cpu-prof', `--cpu-prof-dir=${profileDir}`], logFile: join(localDir, 'bench', 'app-wrk-profiled.log') });
    await runWrk({ ...load, url: `${url}/api/check-ins`, method: 'POST', seconds: warmUpSeconds, serverPid: server.pid, label: 'warm-up' });
    const started = performance.now();
    const profiled = await runWrk({ ...load, url: `${url}/api/check-ins`, method: 'POST', seconds, serverPid: server.pid, label: 'profiled' });
    // serve.mjs exits on SIGTERM; node writes the profile as it exits.
    await stopServer(server);
    server = null;
    const profile = topSelfTime(profileDir, performance.now() - started);
    return { available: true, checkIns, floor, profiled, profile };
  } catch (error) {
    return { available: false, reason: error instanceof Error ? error.message : String(error) };
  } finally {
    await stopServer(server);
  }
}
