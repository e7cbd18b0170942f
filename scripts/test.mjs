// `npm test`: the same set-up as `npm start`, in a fresh database of its own on its own ports,
// then every test: type check, unit and integration (vitest, real PostgreSQL), end-to-end
// (Playwright in Debian's Chromium against the built server). Then the tests run again at fixed
// instants where the parcels' local date is not the UTC date, across both 2026 DST changes and on
// 29 February 2028: the database, the app, the tests and the browser all run on a clock moved there
// by libfaketime. Safe to run beside `npm start`.
import { randomBytes } from 'node:crypto';
import { rmSync } from 'node:fs';
import { join } from 'node:path';
import {
  answers, bin, databaseUrls, ensureAppRole, ensureChromium, ensureDatabase, ensureDependencies, ensureFaketime, ensurePostgres, fakeClockEnv, localDir, localSigningKey, run, say,
  startChild, startCluster, stopCluster, waitForHttp,
} from './lib/setup.mjs';

const pgPort = Number(process.env.TALLYWOOD_TEST_PG_PORT ?? 54339);
const shiftedPgPort = Number(process.env.TALLYWOOD_TEST_SHIFTED_PG_PORT ?? 54359);
const appPort = Number(process.env.TALLYWOOD_TEST_PORT ?? 4331);
const smtpPort = Number(process.env.TALLYWOOD_TEST_SMTP_PORT ?? 2535);
const mailHttpPort = Number(process.env.TALLYWOOD_TEST_MAIL_HTTP_PORT ?? 2590);
const paymentsPort = Number(process.env.TALLYWOOD_TEST_PAYMENTS_PORT ?? 2610);
const started = Date.now();

/**
 * The instants of the time-shifted runs (UTC). The demo's parcels keep America/New_York time
 * (EST = UTC−5, EDT = UTC−4; 2026 changes at 2026-03-08T07:00Z and 2026-11-01T06:00Z, IANA tz data):
 *   2026-12-03T00:30Z  just after UTC midnight: still 19:30 on 2 December on the parcels
 *   2026-12-03T04:45Z  23:45 on the parcels, just before their midnight (UTC is already the 3rd)
 *   2026-03-08T07:30Z  03:30 EDT on the day the clocks went forward (a 23-hour day)
 *   2026-11-01T06:10Z  01:10 EST, in the hour that happens twice on the day the clocks go back (a 25-hour day)
 *   2028-02-29T17:00Z  noon on 29 February 2028
 * TALLYWOOD_TEST_INSTANTS replaces the list (comma-separated ISO instants); "none" skips these runs.
 * Each has its own cluster, on TALLYWOOD_TEST_SHIFTED_PG_PORT (54359) and the ports after it.
 */
const defaultInstants = ['2026-12-03T00:30:00Z', '2026-12-03T04:45:00Z', '2026-03-08T07:30:00Z', '2026-11-01T06:10:00Z', '2028-02-29T17:00:00Z'];
const asked = process.env.TALLYWOOD_TEST_INSTANTS;
const instants = asked === 'none' ? [] : asked ? asked.split(',').map((s) => s.trim()).filter(Boolean) : defaultInstants;
for (const instant of instants) {
  if (Number.isNaN(Date.parse(instant))) {
    console.error(`[tallywood] TALLYWOOD_TEST_INSTANTS: "${instant}" is not an ISO 8601 instant (for example 2027-06-30T03:59:00Z)`);
    process.exit(2);
  }
}

/**
 * `npm test -- <files>` runs only the named test files (each `*.test.ts` by vitest, each `*.spec.ts` by
 * Playwright, a runner with none named is skipped), after the same set-up and type check. For working
 * on a few tests; a whole `npm test` is what lands.
 */
const only = process.argv.slice(2);
const vitestOnly = only.filter((file) => file.endsWith('.test.ts'));
const playwrightOnly = only.filter((file) => file.endsWith('.spec.ts'));
const unknown = only.filter((file) => !file.endsWith('.test.ts') && !file.endsWith('.spec.ts'));
if (unknown.length > 0) {
  console.error(`[tallywood] npm test -- takes test files (*.test.ts, *.spec.ts); not: ${unknown.join(', ')}`);
  process.exit(2);
}
const runVitest = only.length === 0 || vitestOnly.length > 0;
const runPlaywright = only.length === 0 || playwrightOnly.length > 0;

ensureDependencies();
ensurePostgres();
ensureChromium();
if (instants.length > 0) ensureFaketime();

const mailStore = join(localDir, 'mail-test');
const paymentsStore = join(localDir, 'payments-test');

/** What every run shares: the local fakes, the build, the ports. The database and the clock are each run's own. */
const common = {
  ...process.env,
  AUTH_SECRET: 'test-secret-not-for-production',
  /** One app process per test server (scripts/serve.mjs); tests/e2e/processes.spec.ts runs several on one database. */
  TALLYWOOD_PROCESSES: '1',
  /** Signs permit cards; made once and kept in .local/, apart from the one `npm start` keeps. */
  PERMIT_SIGNING_KEY: localSigningKey('permit-signing-key-test.pem'),
  /** This machine only: the local mail catcher, its mailbox and the payments fake (src/server/deployment.ts). */
  TALLYWOOD_LOCAL_MODE: 'true',
  /** Shared by the app, the local fakes and the tests that read what the fakes keep (scripts/lib/local-fake.mjs). */
  LOCAL_FAKES_TOKEN: randomBytes(24).toString('base64url'),
  MAIL_CATCHER_SMTP_PORT: String(smtpPort),
  MAIL_CATCHER_HTTP_PORT: String(mailHttpPort),
  MAIL_CATCHER_HTTP_URL: `http://127.0.0.1:${mailHttpPort}`,
  MAIL_CATCHER_STORE: mailStore,
  TEST_APP_PORT: String(appPort),
  /** Every end-to-end sign-in comes from 127.0.0.1; the per-address limit stays at its default. */
  SIGN_IN_LIMIT_PER_CLIENT_PER_HOUR: '10000',
  TALLYWOOD_OUT_DIR: join(localDir, 'test-dist'),
  /** The local payments fake and the app agree on these; the app's build reads STRIPE_API_URL. */
  PAYMENTS_FAKE_PORT: String(paymentsPort),
  PAYMENTS_FAKE_STORE: paymentsStore,
  PAYMENTS_WEBHOOK_URL: `http://127.0.0.1:${appPort}/api/payments/webhook`,
  STRIPE_API_URL: `http://127.0.0.1:${paymentsPort}`,
  STRIPE_SECRET_KEY: 'sk_test_tallywood_test',
  STRIPE_WEBHOOK_SECRET: 'whsec_tallywood_test',
};

/** The app role's password on the test clusters, each made fresh and listening on loopback only. */
const testDatabasePassword = 'test-database-password-not-for-production';

const databaseEnv = (port, dir) => {
  const urls = databaseUrls({ port, name: 'tallywood_test', password: testDatabasePassword, dir });
  return {
    /** The app's role, as in production: the tests and the server run with only its grants. */
    DATABASE_URL: urls.app,
    /** The tables' owner, for the migrations and the demo. */
    DATABASE_OWNER_URL: urls.owner,
    /** A superuser connection to the test cluster, for tests that make throwaway databases. */
    TEST_ADMIN_DATABASE_URL: `postgres://app@127.0.0.1:${port}/postgres`,
  };
};

/**
 * The local fakes of the mail and payment services, empty and on a run's clock: each run starts from
 * no mail (a test counts the receipts it caused), and the payments fake signs its webhooks with the
 * time, which the app refuses more than five minutes from its own clock.
 */
async function startFakes(clock = {}) {
  for (const url of [`http://127.0.0.1:${mailHttpPort}/messages`, `http://127.0.0.1:${paymentsPort}/__events`]) {
    if (await answers(url)) throw new Error(`something already answers at ${url}: a fake left from another run? Stop it, or set the TALLYWOOD_TEST_* ports.`);
  }
  rmSync(mailStore, { recursive: true, force: true });
  rmSync(paymentsStore, { recursive: true, force: true });
  const env = { ...common, ...clock };
  const children = [startChild('mail', bin('tsx'), ['scripts/mail-catcher.ts'], env), startChild('payments', bin('tsx'), ['scripts/payments-fake.ts'], env)];
  const stop = () =>
    Promise.all(children.map((child) => (child.exitCode !== null ? null : new Promise((done) => { child.once('exit', done); child.kill('SIGTERM'); }))));
  try {
    await waitForHttp(`http://127.0.0.1:${mailHttpPort}/messages`, 30);
    await waitForHttp(`http://127.0.0.1:${paymentsPort}/__events`, 30);
  } catch (error) {
    await stop();
    throw error;
  }
  return stop;
}

let stopFakes = async () => {};
const failures = [];
const step = (label, command, args, env) => {
  say(`${label}…`);
  try {
    run(command, args, { env });
    return true;
  } catch (error) {
    failures.push(label);
    console.error(`[tallywood] ${label} failed: ${error instanceof Error ? error.message : error}`);
    return false;
  }
};

/** A fresh cluster with the app's role, migrated and seeded as the owner (the demo is moved to that clock's today). */
function prepareDatabase({ dir, port, clock = {} }) {
  const stop = startCluster({ dir, port, fresh: true, env: clock });
  ensureDatabase({ port, name: 'tallywood_test' });
  ensureAppRole({ port, password: testDatabasePassword });
  const env = { ...common, ...databaseEnv(port, dir), ...clock };
  run(bin('tsx'), ['scripts/migrate.ts'], { env });
  run(bin('tsx'), ['scripts/seed.ts'], { env });
  return { stop, env };
}

const local = (instant) => new Intl.DateTimeFormat('en-CA', { timeZone: 'America/New_York', dateStyle: 'short', timeStyle: 'short', hourCycle: 'h23' }).format(new Date(instant));

try {
  stopFakes = await startFakes();
  const main = prepareDatabase({ dir: join(localDir, 'pg-test'), port: pgPort });
  step('type check (astro check)', bin('astro'), ['check'], main.env);
  if (runVitest) step('unit and integration tests (vitest)', bin('vitest'), ['run', '--config', 'tests/vitest.config.ts', ...vitestOnly], main.env);
  const built = runPlaywright && step('build', bin('astro'), ['build'], main.env);
  if (failures.length === 0 && built) step('end-to-end tests (Playwright, Chromium)', bin('playwright'), ['test', '--config', 'tests/playwright.config.ts', ...playwrightOnly], main.env);
  main.stop();

  for (const [n, instant] of (failures.length === 0 ? instants : []).entries()) {
    const clock = fakeClockEnv(instant);
    const label = `at ${instant} (${local(instant)} in America/New_York)`;
    say(`running the tests again ${label}…`);
    await stopFakes();
    stopFakes = await startFakes(clock);
    // A cluster and a port of its own for each instant: nothing of one run's server can linger into the next.
    const shifted = prepareDatabase({ dir: join(localDir, `pg-test-shifted-${n}`), port: shiftedPgPort + n, clock });
    try {
      if (runVitest) step(`unit and integration tests ${label}`, bin('vitest'), ['run', '--config', 'tests/vitest.config.ts', ...vitestOnly], shifted.env);
      if (runPlaywright) step(`end-to-end tests ${label}`, bin('playwright'), ['test', '--config', 'tests/playwright.config.ts', ...playwrightOnly], shifted.env);
    } finally {
      shifted.stop();
    }
  }
} catch (error) {
  failures.push('set-up');
  console.error(error instanceof Error ? error.message : error);
} finally {
  await stopFakes();
  stopCluster(join(localDir, 'pg-test'));
  instants.forEach((_, n) => stopCluster(join(localDir, `pg-test-shifted-${n}`)));
}

const seconds = Math.round((Date.now() - started) / 1000);
say(failures.length > 0 ? `tests FAILED (${seconds} s): ${failures.join('; ')}` : `all tests passed (${seconds} s)`);
process.exit(failures.length > 0 ? 1 : 0);
