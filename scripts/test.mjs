// `npm test`: the same set-up as `npm start`, in a fresh database of its own on its own ports,
// then every test: type check, unit and integration (vitest, real PostgreSQL), end-to-end
// (Playwright in Debian's Chromium against the built server). Safe to run beside `npm start`.
import { rmSync } from 'node:fs';
import { join } from 'node:path';
import {
  bin, ensureChromium, ensureDatabase, ensureDependencies, ensurePostgres, localDir, run, say, startChild, startCluster,
  waitForHttp,
} from './lib/setup.mjs';

const pgPort = Number(process.env.TALLYWOOD_TEST_PG_PORT ?? 54339);
const appPort = Number(process.env.TALLYWOOD_TEST_PORT ?? 4331);
const smtpPort = Number(process.env.TALLYWOOD_TEST_SMTP_PORT ?? 2535);
const mailHttpPort = Number(process.env.TALLYWOOD_TEST_MAIL_HTTP_PORT ?? 2590);
const paymentsPort = Number(process.env.TALLYWOOD_TEST_PAYMENTS_PORT ?? 2610);
const started = Date.now();

ensureDependencies();
ensurePostgres();
ensureChromium();

const stopDatabase = startCluster({ dir: join(localDir, 'pg-test'), port: pgPort, fresh: true });
ensureDatabase({ port: pgPort, name: 'tallywood_test' });
const mailStore = join(localDir, 'mail-test');
rmSync(mailStore, { recursive: true, force: true });
const paymentsStore = join(localDir, 'payments-test');
rmSync(paymentsStore, { recursive: true, force: true });

const env = {
  ...process.env,
  DATABASE_URL: `postgres://app@127.0.0.1:${pgPort}/tallywood_test`,
  /** A superuser connection to the test cluster, for tests that make throwaway databases. */
  TEST_ADMIN_DATABASE_URL: `postgres://app@127.0.0.1:${pgPort}/postgres`,
  AUTH_SECRET: 'test-secret-not-for-production',
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

const catcher = startChild('mail', bin('tsx'), ['scripts/mail-catcher.ts'], env);
const payments = startChild('payments', bin('tsx'), ['scripts/payments-fake.ts'], env);
let failed = false;
const step = (label, command, args) => {
  say(`${label}…`);
  try {
    run(command, args, { env });
  } catch (error) {
    failed = true;
    console.error(`[tallywood] ${label} failed: ${error instanceof Error ? error.message : error}`);
  }
};

try {
  await waitForHttp(`http://127.0.0.1:${mailHttpPort}/messages`, 30);
  await waitForHttp(`http://127.0.0.1:${paymentsPort}/__events`, 30);
  run(bin('tsx'), ['scripts/migrate.ts'], { env });
  run(bin('tsx'), ['scripts/seed.ts'], { env });
  step('type check (astro check)', bin('astro'), ['check']);
  step('unit and integration tests (vitest)', bin('vitest'), ['run', '--config', 'tests/vitest.config.ts']);
  step('build', bin('astro'), ['build']);
  if (!failed) step('end-to-end tests (Playwright, Chromium)', bin('playwright'), ['test', '--config', 'tests/playwright.config.ts']);
} catch (error) {
  failed = true;
  console.error(error instanceof Error ? error.message : error);
} finally {
  catcher.kill('SIGTERM');
  payments.kill('SIGTERM');
  stopDatabase();
}

const seconds = Math.round((Date.now() - started) / 1000);
say(failed ? `tests FAILED (${seconds} s)` : `all tests passed (${seconds} s)`);
process.exit(failed ? 1 : 0);
