import { spawn } from 'node:child_process';
import { mkdirSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { root } from '../lib/setup.mjs';
import type { BenchPosition } from './parcels';

/** What a child printed and how it ended; output is also echoed, prefixed, when `echo` is given. */
export function capture(command: string, args: string[], { env = {}, echo }: { env?: Record<string, string>; echo?: string } = {}): Promise<{ code: number; stdout: string; stderr: string }> {
  return new Promise((resolve, reject) => {
    const child = spawn(command, args, { cwd: root, env: { ...process.env, ...env }, stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (chunk: Buffer) => (stdout += chunk.toString()));
    child.stderr.on('data', (chunk: Buffer) => (stderr += chunk.toString()));
    child.on('error', reject);
    child.on('close', (code) => {
      if (echo) for (const line of `${stdout}${stderr}`.split('\n')) if (line.trim() && !line.startsWith('TALLYWOOD-WRK')) console.log(`[${echo}] ${line}`);
      resolve({ code: code ?? 1, stdout, stderr });
    });
  });
}

/**
 * CPU seconds (user + system) a process and its running children have used, from /proc (proc(5): utime
 * and stime in clock ticks, 100 a second; task/<tid>/children): the server's app processes under
 * node:cluster (TALLYWOOD_PROCESSES) count with it. Null off Linux.
 */
export function cpuSeconds(pid: number | undefined): number | null {
  try {
    const fields = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1]?.split(' ') ?? [];
    const own = (Number(fields[11]) + Number(fields[12])) / 100;
    const children = readdirSync(`/proc/${pid}/task`).flatMap((tid) => readFileSync(`/proc/${pid}/task/${tid}/children`, 'utf8').split(' ').filter(Boolean).map(Number));
    return children.reduce((sum, child) => sum + (cpuSeconds(child) ?? 0), own);
  } catch {
    return null;
  }
}

export type WrkFigures = {
  threads: number;
  connections: number;
  seconds: number;
  requests: number;
  perSecond: number;
  p50: number;
  p90: number;
  p95: number;
  p99: number;
  mean: number;
  max: number;
  errors: { connect: number; read: number; write: number; status: number; timeout: number };
  statuses: Record<string, number>;
  verdicts: Record<string, number>;
  /** The app server's CPU (user + system, from /proc) over the run, per answered request. */
  serverCpuMsPerRequest: number | null;
  /** PostgreSQL's CPU (the postmaster and its processes, the backends among them) over the run, per answered request. */
  databaseCpuMsPerRequest: number | null;
};

type Load = {
  url: string;
  method: 'GET' | 'POST';
  cookies: string[];
  positions: BenchPosition[];
  /** Bodies to send instead of check-ins at `positions`; `@KEY@` in one is replaced by a fresh key per request. */
  bodies?: string[];
  threads: number;
  connections: number;
  seconds: number;
  serverPid: number | undefined;
  /** The bench cluster's postmaster (the first line of its postmaster.pid). */
  databasePid?: number;
  label: string;
};

const luaString = (value: string) => `"${value.replace(/\\/g, '\\\\').replace(/"/g, '\\"').replace(/\n/g, '\\n')}"`;

/**
 * One wrk run (`wrk -t -c -d --latency -s scripts/bench/check-ins.lua`): each thread signs in with
 * its own cookies and sends its own positions (the Lua script says how), and done() prints the
 * counts and percentiles on one line that is parsed here.
 */
export async function runWrk({ url, method, cookies, positions, bodies: given, threads, connections, seconds, serverPid, databasePid, label }: Load): Promise<WrkFigures> {
  const dir = join(root, '.local', 'bench');
  mkdirSync(dir, { recursive: true });
  const dataFile = join(dir, `wrk-${label}.lua`);
  const { origin, pathname } = new URL(url);
  const bodies = given ?? positions.map(({ longitude, latitude, accuracyM }) => JSON.stringify({ longitude, latitude, accuracyM }));
  writeFileSync(
    dataFile,
    [
      '-- Written by scripts/bench/wrk.ts for one run of scripts/bench/check-ins.lua.',
      'return {',
      `  method = ${luaString(method)}, path = ${luaString(pathname)}, origin = ${luaString(origin)}, threads = ${threads},`,
      `  cookies = { ${cookies.map(luaString).join(', ')} },`,
      '  bodies = {',
      ...bodies.map((b) => `    ${luaString(b)},`),
      '  },',
      '}',
      '',
    ].join('\n'),
  );
  const cpuBefore = cpuSeconds(serverPid);
  const databaseBefore = cpuSeconds(databasePid);
  const result = await capture('wrk', ['-t', String(threads), '-c', String(connections), '-d', `${seconds}s`, '--timeout', '5s', '--latency', '-s', join(root, 'scripts', 'bench', 'check-ins.lua'), url], {
    env: { TALLYWOOD_WRK_DATA: dataFile },
    echo: `wrk ${label}`,
  });
  const cpuAfter = cpuSeconds(serverPid);
  const databaseAfter = cpuSeconds(databasePid);
  const line = result.stdout.split('\n').find((l) => l.startsWith('TALLYWOOD-WRK '));
  if (result.code !== 0 || !line) throw new Error(`wrk (${label}) exited with ${result.code}: ${(result.stderr || result.stdout).slice(0, 400)}`);
  const raw = JSON.parse(line.slice('TALLYWOOD-WRK '.length)) as {
    requests: number; durationUs: number; meanUs: number; maxUs: number; p50Us: number; p90Us: number; p95Us: number; p99Us: number;
    errors: WrkFigures['errors']; statuses: Record<string, number>; verdicts: Record<string, number>;
  };
  const answered = Object.values(raw.statuses).reduce((a, b) => a + b, 0);
  return {
    threads,
    connections,
    seconds: raw.durationUs / 1e6,
    requests: raw.requests,
    perSecond: raw.requests / (raw.durationUs / 1e6),
    p50: raw.p50Us / 1000,
    p90: raw.p90Us / 1000,
    p95: raw.p95Us / 1000,
    p99: raw.p99Us / 1000,
    mean: raw.meanUs / 1000,
    max: raw.maxUs / 1000,
    errors: raw.errors,
    statuses: raw.statuses,
    verdicts: raw.verdicts,
    serverCpuMsPerRequest: cpuBefore === null || cpuAfter === null ? null : ((cpuAfter - cpuBefore) * 1000) / Math.max(1, answered),
    databaseCpuMsPerRequest: databaseBefore === null || databaseAfter === null ? null : ((databaseAfter - databaseBefore) * 1000) / Math.max(1, answered),
  };
}
