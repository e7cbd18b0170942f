import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { generateKeyPairSync, randomBytes, randomUUID } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { request as httpRequest } from 'node:http';
import { createServer, type AddressInfo } from 'node:net';
import { join } from 'node:path';
import { expect, test } from '@playwright/test';
import { baseURL, sessionFile } from './support';

/**
 * The built app as a deployment starts it (`npm run serve`, scripts/serve.mjs), with the settings of
 * a public deployment or of local mode, and requests made the way an attacker would: raw headers a
 * client chose, not the ones a browser would send.
 */
const root = join(import.meta.dirname, '..', '..');

test.describe.configure({ mode: 'serial' });

async function freePort(): Promise<number> {
  const probe = createServer();
  await new Promise<void>((resolve) => probe.listen(0, '127.0.0.1', resolve));
  const { port } = probe.address() as AddressInfo;
  await new Promise((resolve) => probe.close(resolve));
  return port;
}

type Served = { url: string; child: ChildProcess; output: () => string; exited: Promise<number | null>; stop: () => Promise<void> };

/** Starts scripts/serve.mjs with the test run's environment changed by `env` (undefined removes a variable). */
async function serve(env: Record<string, string | undefined>, { waitForReady = true } = {}): Promise<Served> {
  const port = await freePort();
  const merged: Record<string, string> = {};
  for (const [key, value] of Object.entries({ ...process.env, HOST: '127.0.0.1', PORT: String(port), ...env })) if (value !== undefined) merged[key] = value;
  const child = spawn(process.execPath, [join(root, 'scripts', 'serve.mjs')], { cwd: root, env: merged, stdio: ['ignore', 'pipe', 'pipe'] });
  let output = '';
  child.stdout?.on('data', (chunk) => (output += chunk));
  child.stderr?.on('data', (chunk) => (output += chunk));
  const exited = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));
  const url = `http://127.0.0.1:${port}`;
  if (waitForReady) {
    await expect.poll(() => output.includes('Tallywood is serving') || child.exitCode !== null, { timeout: 20_000, message: 'the server to start' }).toBe(true);
    expect(child.exitCode, output).toBeNull();
  }
  return {
    url,
    child,
    output: () => output,
    exited,
    stop: async () => {
      if (child.exitCode === null) {
        child.kill('SIGTERM');
        await exited;
      }
    },
  };
}

/** A raw GET or POST: every header as given, Host included. */
function raw(url: string, { method = 'GET', headers = {}, body }: { method?: string; headers?: Record<string, string>; body?: string } = {}): Promise<{ status: number; body: string; location?: string }> {
  return new Promise((resolve, reject) => {
    const req = httpRequest(url, { method, headers: { ...headers, ...(body ? { 'content-length': String(Buffer.byteLength(body)) } : {}) } }, (res) => {
      let text = '';
      res.on('data', (chunk) => (text += chunk));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, body: text, location: res.headers.location }));
    });
    req.on('error', reject);
    req.end(body);
  });
}

/** What a public deployment sets, with nothing of this repository's local secrets. */
const publicSettings = () => ({
  TALLYWOOD_LOCAL_MODE: 'false',
  PUBLIC_HOSTNAME: 'tallywood.example.org',
  SMTP_URL: `smtp://127.0.0.1:${process.env.MAIL_CATCHER_SMTP_PORT ?? 2535}`,
  AUTH_SECRET: randomBytes(32).toString('base64url'),
  STRIPE_API_URL: 'https://api.stripe.example',
  STRIPE_SECRET_KEY: `sk_live_${randomBytes(12).toString('hex')}`,
  STRIPE_WEBHOOK_SECRET: `whsec_${randomBytes(12).toString('hex')}`,
  PERMIT_SIGNING_KEY: generateKeyPairSync('ed25519').privateKey.export({ type: 'pkcs8', format: 'pem' }).toString(),
});

test('given a public deployment that sets no SMTP_URL or provider settings, it refuses to start and says what to set', async () => {
  const server = await serve(
    { TALLYWOOD_LOCAL_MODE: 'false', PUBLIC_HOSTNAME: 'tallywood.example.org', SMTP_URL: undefined, STRIPE_API_URL: undefined, STRIPE_SECRET_KEY: undefined, STRIPE_WEBHOOK_SECRET: undefined, PERMIT_SIGNING_KEY: undefined },
    { waitForReady: false },
  );
  expect(await server.exited).toBe(1);
  const said = server.output();
  expect(said).toContain('Tallywood will not start until this is set');
  for (const variable of ['SMTP_URL', 'AUTH_SECRET', 'STRIPE_API_URL', 'STRIPE_SECRET_KEY', 'STRIPE_WEBHOOK_SECRET', 'PERMIT_SIGNING_KEY']) expect(said).toContain(variable);
  expect(said).not.toContain('Tallywood is serving');
});

test('given local mode together with a public host name, it refuses to start', async () => {
  const server = await serve({ TALLYWOOD_LOCAL_MODE: 'true', PUBLIC_HOSTNAME: 'tallywood.example.org' }, { waitForReady: false });
  expect(await server.exited).toBe(1);
  expect(server.output()).toContain('TALLYWOOD_LOCAL_MODE is for this machine only');
});

test('given the built entry started directly, not through the launcher, it refuses to start', async () => {
  const entry = join(process.env.TALLYWOOD_OUT_DIR ?? join(root, '.local', 'test-dist'), 'server', 'entry.mjs');
  const child = spawn(process.execPath, [entry], { cwd: root, env: { ...process.env, HOST: '127.0.0.1', PORT: String(await freePort()) }, stdio: ['ignore', 'pipe', 'pipe'] });
  let output = '';
  child.stderr?.on('data', (chunk) => (output += chunk));
  expect(await new Promise((resolve) => child.once('exit', resolve))).toBe(1);
  expect(output).toContain('npm run serve');
});

test('given a public deployment with its settings, it serves, and the mailbox and its API do not exist, even asked from this machine', async () => {
  const server = await serve(publicSettings());
  try {
    expect((await raw(`${server.url}/api/health`)).status).toBe(200);
    expect((await raw(`${server.url}/api/mailbox`)).status).toBe(404);
    const page = await raw(`${server.url}/mailbox`);
    expect(page.status).toBe(404);
    expect(page.body).not.toContain('sign-in link');
  } finally {
    await server.stop();
  }
});

test('given local mode, the mailbox refuses any request that a proxy relayed, whatever address it names', async () => {
  // The test server is in local mode, with no trusted proxy: forwarding headers are removed, and the request is marked as relayed.
  expect((await raw(`${baseURL}/api/mailbox`)).status).toBe(200);
  const relayedBy: Record<string, string>[] = [
    { 'x-forwarded-for': '127.0.0.1' },
    { forwarded: 'for=127.0.0.1' },
    { 'x-real-ip': '127.0.0.1' },
    { 'x-forwarded-host': '127.0.0.1' },
    { 'x-forwarded-proto': 'http' },
  ];
  for (const headers of relayedBy) {
    expect((await raw(`${baseURL}/api/mailbox`, { headers })).status, JSON.stringify(headers)).toBe(404);
    expect((await raw(`${baseURL}/mailbox`, { headers })).status, JSON.stringify(headers)).toBe(404);
  }
  // A proxy on this machine that is trusted still relays strangers: refused too.
  const server = await serve({ TRUSTED_PROXIES: '127.0.0.1' });
  try {
    expect((await raw(`${server.url}/api/mailbox`)).status).toBe(200);
    expect((await raw(`${server.url}/api/mailbox`, { headers: { 'x-forwarded-for': '127.0.0.1' } })).status).toBe(404);
  } finally {
    await server.stop();
  }
});

test('given sign-in requests naming other client addresses in X-Forwarded-For, only a trusted proxy is believed', async () => {
  const ip = () => `198.51.100.${1 + Math.floor(Math.random() * 250)}`;
  const limits = { SIGN_IN_LIMIT_PER_CLIENT_PER_HOUR: '2', SIGN_IN_LIMIT_PER_HOUR: '1000' };
  const signUp = (url: string, client: string) =>
    raw(`${url}/api/sign-up`, { method: 'POST', headers: { 'content-type': 'application/json', 'x-forwarded-for': client }, body: JSON.stringify({ email: `proxy-${randomUUID().slice(0, 8)}@example.org`, name: 'Proxy Test', managesLand: false }) });

  const behindProxy = await serve({ ...limits, TRUSTED_PROXIES: '127.0.0.1' });
  try {
    const first = ip();
    let second = ip();
    while (second === first) second = ip();
    expect((await signUp(behindProxy.url, first)).status).toBe(201);
    expect((await signUp(behindProxy.url, first)).status).toBe(201);
    const third = await signUp(behindProxy.url, first);
    expect(third.status, 'the third from one client address in the hour').toBe(429);
    expect(third.body).toContain('from your network');
    expect((await signUp(behindProxy.url, second)).status, 'another client behind the proxy').toBe(201);
  } finally {
    await behindProxy.stop();
  }

  // With no trusted proxy, every request counts against the socket's own address (127.0.0.1, already
  // past 2 in this hour from the sign-ins above and the run's set-up), whatever address it names.
  const direct = await serve(limits);
  try {
    for (let n = 0; n < 3; n++) {
      const answer = await signUp(direct.url, ip());
      expect(answer.status).toBe(429);
    }
  } finally {
    await direct.stop();
  }
});

test('given the session cookie, HTTPS takes only the __Secure- one and HTTP only the plain one; the scheme is believed from a trusted proxy only', async () => {
  const state = JSON.parse(readFileSync(sessionFile('forager@example.org'), 'utf8')) as { cookies: { name: string; value: string }[] };
  const token = state.cookies.find((c) => c.name.endsWith('authjs.session-token'))?.value ?? '';
  expect(token).not.toBe('');
  const me = (url: string, cookie: string, headers: Record<string, string> = {}) => raw(`${url}/api/me`, { headers: { cookie, ...headers } }).then((r) => r.status);
  const secure = `__Secure-authjs.session-token=${token}`;
  const plain = `authjs.session-token=${token}`;

  const proxied = await serve({ TRUSTED_PROXIES: '127.0.0.1' });
  try {
    expect(await me(proxied.url, secure, { 'x-forwarded-proto': 'https' })).toBe(200);
    expect(await me(proxied.url, plain, { 'x-forwarded-proto': 'https' })).toBe(401);
    expect(await me(proxied.url, plain)).toBe(200);
    expect(await me(proxied.url, secure)).toBe(401);
  } finally {
    await proxied.stop();
  }
  // Without a trusted proxy a client's X-Forwarded-Proto is dropped: the request is plain HTTP.
  expect(await me(baseURL, secure, { 'x-forwarded-proto': 'https' })).toBe(401);
  expect(await me(baseURL, plain, { 'x-forwarded-proto': 'https' })).toBe(200);
});

test('given the server started, health reports the job queue and the outbox in numbers to an admin only, and SIGTERM stops the queue before the server exits with 0', async () => {
  const server = await serve({});
  try {
    await expect.poll(() => server.output(), { timeout: 20_000 }).toContain('jobs: the queue started');
    const stranger = await raw(`${server.url}/api/health`);
    expect(JSON.parse(stranger.body)).toEqual({ ok: true, status: 'ready' });
    const admin = JSON.parse(readFileSync(sessionFile('admin@example.org'), 'utf8')) as { cookies: { name: string; value: string }[] };
    const health = await raw(`${server.url}/api/health`, { headers: { cookie: admin.cookies.map((c) => `${c.name}=${c.value}`).join('; ') } });
    expect(health.status).toBe(200);
    const body = JSON.parse(health.body) as { ok: boolean; status: string; queue: Record<string, unknown> | null; outbox: Record<string, unknown> | null };
    expect(body).toMatchObject({ ok: true, status: 'ready' });
    expect(Object.keys(body.queue ?? {}).sort()).toEqual(['failed', 'lastCompletedSecondsAgo', 'waiting']);
    expect(Number.isInteger(body.queue?.waiting)).toBe(true);
    expect(Number.isInteger(body.queue?.failed)).toBe(true);
    expect(Object.keys(body.outbox ?? {}).sort()).toEqual(['failed', 'retrying', 'waiting']);
    for (const count of Object.values(body.outbox ?? {})) expect(Number.isInteger(count)).toBe(true);
  } finally {
    await server.stop();
  }
  expect(await server.exited).toBe(0);
  expect(server.output()).toContain('jobs: the queue stopped');
});

test('given TALLYWOOD_PROCESSES=2, two processes serve one port, one that dies is replaced, and SIGTERM stops the queue of each before the server exits with 0', async () => {
  const server = await serve({ TALLYWOOD_PROCESSES: '2' });
  const started = () => server.output().split('jobs: the queue started').length - 1;
  try {
    expect(server.output()).toContain('with 2 processes');
    await expect.poll(started, { timeout: 20_000 }).toBe(2);
    const workers = spawnSync('pgrep', ['-P', String(server.child.pid)], { encoding: 'utf8' }).stdout.trim().split('\n').map(Number);
    expect(workers).toHaveLength(2);
    process.kill(workers[0]!, 'SIGKILL');
    await expect.poll(() => server.output(), { timeout: 10_000 }).toContain(`(pid ${workers[0]}) exited (SIGKILL); starting another`);
    await expect.poll(started, { timeout: 20_000 }).toBe(3);
    for (let n = 0; n < 4; n += 1) expect((await raw(`${server.url}/api/health`)).status).toBe(200);
  } finally {
    await server.stop();
  }
  expect(await server.exited).toBe(0);
  expect(server.output().split('jobs: the queue stopped').length - 1).toBe(2);
});

test('given TALLYWOOD_PROCESSES that is not a whole number of processes, it refuses to start and says so', async () => {
  const server = await serve({ TALLYWOOD_PROCESSES: 'all' }, { waitForReady: false });
  expect(await server.exited).toBe(1);
  expect(server.output()).toContain('TALLYWOOD_PROCESSES must be a whole number');
});

test('given a database that does not answer, health says so in one word and keeps the error for the log', async () => {
  const server = await serve({ DATABASE_URL: `postgres://app@127.0.0.1:${await freePort()}/nowhere` });
  try {
    const health = await raw(`${server.url}/api/health`);
    expect(health.status).toBe(503);
    expect(JSON.parse(health.body)).toEqual({ ok: false, status: 'database-unreachable' });
    await expect.poll(() => server.output()).toContain('health: the database did not answer');
  } finally {
    await server.stop();
  }
});

test('given a sign-in link opened a second time, the visitor is told it was used, and the log has one line for it, not a stack trace', async () => {
  const server = await serve({});
  try {
    const email = `used-link-${randomUUID().slice(0, 8)}@example.org`;
    const signUp = await raw(`${server.url}/api/sign-up`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email, name: 'Used Link', managesLand: false }) });
    expect(signUp.status, signUp.body).toBe(201);
    let link = '';
    await expect
      .poll(async () => {
        const { messages } = JSON.parse((await raw(`${server.url}/api/mailbox?to=${encodeURIComponent(email)}`)).body) as { messages: { text: string }[] };
        link = messages[0]?.text.match(/https?:\/\/\S+\/api\/auth\/callback\/\S+/)?.[0] ?? '';
        return link;
      })
      .not.toBe('');
    const path = new URL(link).pathname + new URL(link).search;
    const first = await raw(`${server.url}${path}`);
    expect(first.status).toBe(302);
    expect(first.location).not.toContain('error=');
    const again = await raw(`${server.url}${path}`);
    expect(again.status).toBe(302);
    expect(again.location).toContain('/sign-in/problem?error=Verification');
    await expect.poll(() => server.output()).toContain('"msg":"sign-in link refused"');
    const logged = server.output().split('\n').filter((line) => /Verification|^\s+at /.test(line));
    expect(logged).toHaveLength(1);
    expect(JSON.parse(logged[0])).toMatchObject({ level: 40, type: 'Verification', msg: 'sign-in link refused' });
  } finally {
    await server.stop();
  }
});

test('given requests with a name, an e-mail address and a position, the log has a JSON line for each with its id, route, status and time, and none of those personal facts', async () => {
  const server = await serve({});
  try {
    const email = `log-reader-${randomUUID().slice(0, 8)}@example.org`;
    const name = `Quillon Marsh ${randomUUID().slice(0, 4)}`;
    const signUp = await raw(`${server.url}/api/sign-up`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email, name, managesLand: false }) });
    expect(signUp.status, signUp.body).toBe(201);
    const state = JSON.parse(readFileSync(sessionFile('forager@example.org'), 'utf8')) as { cookies: { name: string; value: string }[] };
    const cookie = state.cookies.map((c) => `${c.name}=${c.value}`).join('; ');
    // An unusual position, so that its digits cannot appear in a log line by chance.
    const position = { longitude: -71.123457, latitude: 43.987653, accuracyM: 7 };
    const checkIn = await raw(`${server.url}/api/check-ins`, { method: 'POST', headers: { 'content-type': 'application/json', origin: server.url, cookie }, body: JSON.stringify(position) });
    expect(checkIn.status, checkIn.body).toBeLessThan(500);
    const parcel = await raw(`${server.url}/api/parcels/00000000-0000-4000-8000-000000000000`, { headers: { cookie } });
    expect(parcel.status).toBeGreaterThanOrEqual(400);

    // A line is written when its answer has gone, so the last may reach the output a moment after the client has it.
    const answeredLines = () =>
      server.output().split('\n').filter((line) => line.startsWith('{') && line.endsWith('}')).map((line) => JSON.parse(line) as Record<string, unknown>).filter((line) => line.msg === 'answered');
    await expect.poll(() => answeredLines().map((line) => line.route)).toEqual(expect.arrayContaining(['/api/sign-up', '/api/check-ins', '/api/parcels/[id]']));
    const answered = answeredLines();
    for (const line of answered) {
      expect(line.requestId).toMatch(/^[0-9a-f-]{36}$/);
      expect(typeof line.status).toBe('number');
      expect(typeof line.ms).toBe('number');
    }
    expect(answered.find((line) => line.route === '/api/parcels/[id]')?.status).toBe(parcel.status);
    // Request ids are each request's own.
    expect(new Set(answered.map((line) => line.requestId)).size).toBe(answered.length);
    const everything = server.output();
    for (const secret of [email, name, '71.123457', '43.987653', state.cookies[0]?.value ?? 'no-cookie']) expect(everything).not.toContain(secret);
  } finally {
    await server.stop();
  }
});
