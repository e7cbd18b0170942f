import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { mkdtempSync, rmSync } from 'node:fs';
import { createServer, type AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import postgres from 'postgres';

/**
 * Several app processes on one database of their own, as a deployment runs them: a throwaway database
 * on the test cluster (made through TEST_ADMIN_DATABASE_URL, migrated and seeded with the demo as
 * `npm test` does its own), a mail catcher of its own on free ports, and servers started with
 * scripts/serve.mjs from the test build. Everything inherits the test run's environment, its fake
 * clock included, so the database, the servers and the tests agree on the time.
 */
const root = join(import.meta.dirname, '..', '..');
const tsx = join(root, 'node_modules', '.bin', 'tsx');
const token = process.env.LOCAL_FAKES_TOKEN ?? 'app-processes-token';

export async function freePort(): Promise<number> {
  const probe = createServer();
  await new Promise<void>((resolve) => probe.listen(0, '127.0.0.1', resolve));
  const { port } = probe.address() as AddressInfo;
  await new Promise((resolve) => probe.close(resolve));
  return port;
}

/** Resolves when `ready` says the output is far enough; rejects when the process exits first or after `seconds`. */
function waitForOutput(child: ChildProcess, output: () => string, ready: (text: string) => boolean, what: string, seconds = 45): Promise<void> {
  return new Promise((resolve, reject) => {
    const timer = setInterval(() => {
      if (ready(output())) done(() => resolve());
      else if (child.exitCode !== null || child.signalCode !== null) done(() => reject(new Error(`${what} exited (${child.exitCode ?? child.signalCode}):\n${output().slice(-3000)}`)));
    }, 100);
    const deadline = setTimeout(() => done(() => reject(new Error(`${what} was not ready within ${seconds} s:\n${output().slice(-3000)}`))), seconds * 1000);
    const done = (then: () => void) => {
      clearInterval(timer);
      clearTimeout(deadline);
      then();
    };
  });
}

function stopChild(child: ChildProcess, signal: NodeJS.Signals, group = false): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve();
  const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
  if (group && child.pid) process.kill(-child.pid, signal);
  else child.kill(signal);
  return exited;
}

export type CaughtMail = { id: string; messageId: string | null; deliveries: number; to: string[]; subject: string; text: string };

/** scripts/mail-catcher.ts on ports of its own, keeping its messages in a folder of its own across restarts. */
export class MailCatcher {
  private child: ChildProcess | null = null;
  private readonly store = mkdtempSync(join(tmpdir(), 'tallywood-processes-mail-'));
  private constructor(readonly smtpPort: number, readonly httpPort: number) {}

  static async start() {
    const catcher = new MailCatcher(await freePort(), await freePort());
    await catcher.start();
    return catcher;
  }

  async start() {
    let output = '';
    const child = spawn(tsx, ['scripts/mail-catcher.ts'], {
      cwd: root,
      env: { ...process.env, MAIL_CATCHER_SMTP_PORT: String(this.smtpPort), MAIL_CATCHER_HTTP_PORT: String(this.httpPort), MAIL_CATCHER_STORE: this.store, LOCAL_FAKES_TOKEN: token },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    child.stdout?.on('data', (chunk) => (output += chunk));
    child.stderr?.on('data', (chunk) => (output += chunk));
    this.child = child;
    await waitForOutput(child, () => output, (text) => text.includes('SMTP on') && text.includes('API on'), 'the mail catcher');
  }

  async stop() {
    if (this.child) await stopChild(this.child, 'SIGTERM');
    this.child = null;
  }

  private async call(method: string, path: string) {
    const response = await fetch(`http://127.0.0.1:${this.httpPort}${path}`, { method, headers: { 'x-local-token': token } });
    if (!response.ok) throw new Error(`the mail catcher answered ${response.status} to ${method} ${path}`);
    return response.json() as Promise<unknown>;
  }

  messages(): Promise<CaughtMail[]> {
    return this.call('GET', '/messages') as Promise<CaughtMail[]>;
  }

  /** Holds each message whose DATA arrives from now, unanswered, until `release`. */
  hold() {
    return this.call('POST', '/__hold');
  }

  async held(): Promise<number> {
    return ((await this.call('GET', '/__hold')) as { held: number }).held;
  }

  /** Accepts the messages held (whether or not their sender is still there) and stops holding. */
  release() {
    return this.call('DELETE', '/__hold');
  }

  async remove() {
    await this.stop();
    rmSync(this.store, { recursive: true, force: true });
  }
}

/** One `node scripts/serve.mjs` with `processes` app processes, in a process group of its own; its output is kept. */
export class AppServer {
  private child: ChildProcess | null = null;
  /** Everything every start of this server wrote, in order. */
  private written = '';

  constructor(readonly url: string, private readonly env: Record<string, string>) {}

  get output() {
    return this.written;
  }

  async start() {
    const startedAt = this.written.length;
    const child = spawn(process.execPath, [join(root, 'scripts', 'serve.mjs')], { cwd: root, env: this.env, stdio: ['ignore', 'pipe', 'pipe'], detached: true });
    child.stdout?.on('data', (chunk) => (this.written += chunk));
    child.stderr?.on('data', (chunk) => (this.written += chunk));
    this.child = child;
    const processes = Number(this.env.TALLYWOOD_PROCESSES);
    const count = (text: string, needle: string) => text.split(needle).length - 1;
    await waitForOutput(
      child,
      () => this.written.slice(startedAt),
      (text) => text.includes('Tallywood is serving') && count(text, 'jobs: the queue started') >= processes,
      `the server at ${this.url}`,
    );
  }

  /** SIGKILL to every process of the server at once: nothing is finished or rolled back by the app. */
  async kill() {
    if (this.child) await stopChild(this.child, 'SIGKILL', true);
    this.child = null;
  }

  async stop() {
    if (this.child) await stopChild(this.child, 'SIGTERM');
    this.child = null;
  }
}

/** A database of its own on the test cluster, migrated and with the demo loaded; `sql` is its owner's connection. */
export async function createAppDatabase() {
  const adminUrl = process.env.TEST_ADMIN_DATABASE_URL;
  const appUrl = process.env.DATABASE_URL;
  if (!adminUrl || !appUrl) throw new Error('TEST_ADMIN_DATABASE_URL and DATABASE_URL come from npm test');
  const name = `tallywood_processes_${randomBytes(6).toString('hex')}`;
  const admin = postgres(adminUrl, { max: 1, onnotice: () => {} });
  await admin.unsafe(`create database "${name}"`);
  const at = (url: string) => Object.assign(new URL(url), { pathname: `/${name}` }).toString();
  const ownerUrl = at(adminUrl);
  for (const script of ['scripts/migrate.ts', 'scripts/seed.ts']) {
    const ran = spawnSync(tsx, [script], { cwd: root, env: { ...process.env, DATABASE_OWNER_URL: ownerUrl }, encoding: 'utf8' });
    if (ran.status !== 0) throw new Error(`${script} failed: ${ran.stdout}${ran.stderr}`);
  }
  const sql = postgres(ownerUrl, { max: 2, onnotice: () => {} });
  return {
    name,
    sql,
    appUrl: at(appUrl),
    ownerUrl,
    async drop() {
      await sql.end({ timeout: 5 });
      await admin`select pg_terminate_backend(pid) from pg_stat_activity where datname = ${name} and pid <> pg_backend_pid()`;
      await admin.unsafe(`drop database if exists "${name}"`);
      await admin.end({ timeout: 5 });
    },
  };
}

export type AppDatabase = Awaited<ReturnType<typeof createAppDatabase>>;

/**
 * A server of the harness: the test run's environment with its own port, the throwaway database, the
 * catcher's SMTP port as the mail server, and retries a second apart (MAIL_RETRY_DELAY_SECONDS).
 */
export async function appServer(database: AppDatabase, catcher: MailCatcher, { processes }: { processes: number }) {
  const port = await freePort();
  const env: Record<string, string> = {};
  for (const [key, value] of Object.entries(process.env)) if (value !== undefined) env[key] = value;
  Object.assign(env, {
    HOST: '127.0.0.1',
    PORT: String(port),
    DATABASE_URL: database.appUrl,
    DATABASE_OWNER_URL: database.ownerUrl,
    SMTP_URL: `smtp://127.0.0.1:${catcher.smtpPort}`,
    MAIL_RETRY_DELAY_SECONDS: '1',
    TALLYWOOD_PROCESSES: String(processes),
  });
  return new AppServer(`http://127.0.0.1:${port}`, env);
}

/** The JSON lines of a server's output (pino's log), the rest left out. */
export function logLines(output: string): Record<string, unknown>[] {
  return output
    .split('\n')
    .filter((line) => line.startsWith('{') && line.endsWith('}'))
    .flatMap((line) => {
      try {
        return [JSON.parse(line) as Record<string, unknown>];
      } catch {
        return [];
      }
    });
}
