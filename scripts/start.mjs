// `npm start`: everything from a clean clone to a running Tallywood with the demo loaded.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import {
  bin, databaseUrls, ensureAppRole, ensureDatabase, ensureDependencies, ensurePostgres, fail, localDir, localSecret, localSigningKey, root, run, say,
  startChild, startCluster, waitForHttp,
} from './lib/setup.mjs';

const port = Number(process.env.PORT ?? 4321);
const pgPort = Number(process.env.TALLYWOOD_PG_PORT ?? 54329);
const smtpPort = Number(process.env.MAIL_CATCHER_SMTP_PORT ?? 2525);
const mailHttpPort = Number(process.env.MAIL_CATCHER_HTTP_PORT ?? 2580);
const paymentsPort = Number(process.env.PAYMENTS_FAKE_PORT ?? 2600);
/** Local mode: this machine only, with the local fakes for what is not configured (src/server/deployment.ts). */
const localMode = !process.env.PUBLIC_HOSTNAME;
const useFakePayments = localMode && !process.env.STRIPE_API_URL;
const started = Date.now();

ensureDependencies();

let stopDatabase = () => {};
/** The app signs in as a role that owns nothing; migrations and the demo run as the tables' owner. */
let databaseUrl = process.env.DATABASE_URL;
let ownerUrl = process.env.DATABASE_OWNER_URL ?? databaseUrl;
if (!databaseUrl) {
  ensurePostgres();
  try {
    stopDatabase = startCluster({ dir: join(localDir, 'pg'), port: pgPort });
    ensureDatabase({ port: pgPort, name: 'tallywood' });
    const password = localSecret('database-password');
    ensureAppRole({ port: pgPort, password });
    const urls = databaseUrls({ port: pgPort, name: 'tallywood', password, dir: join(localDir, 'pg') });
    databaseUrl = urls.app;
    ownerUrl = urls.owner;
  } catch (error) {
    stopDatabase();
    fail(error instanceof Error ? error.message : String(error));
  }
}

const useCatcher = localMode && !process.env.SMTP_URL;
/** The app and the local fakes share it; the fakes' mailbox and test endpoints need it (scripts/lib/local-fake.mjs). */
const localFakesToken = localMode ? localSecret('local-fakes-token') : undefined;
const env = {
  TALLYWOOD_LOCAL_MODE: String(localMode),
  ...(localFakesToken ? { LOCAL_FAKES_TOKEN: localFakesToken } : {}),
  DATABASE_URL: databaseUrl,
  AUTH_SECRET: process.env.AUTH_SECRET ?? localSecret('auth-secret'),
  // Outside local mode the deployment gives its own, or the server refuses to start (src/server/deployment.ts).
  ...(process.env.PERMIT_SIGNING_KEY || localMode ? { PERMIT_SIGNING_KEY: process.env.PERMIT_SIGNING_KEY || localSigningKey('permit-signing-key.pem') } : {}),
  HOST: '127.0.0.1',
  PORT: String(port),
  ...(useCatcher
    ? { MAIL_CATCHER_SMTP_PORT: String(smtpPort), MAIL_CATCHER_HTTP_URL: `http://127.0.0.1:${mailHttpPort}` }
    : {}),
  ...(useFakePayments ? { STRIPE_API_URL: `http://127.0.0.1:${paymentsPort}` } : {}),
};

const children = [];
let stopping = false;
function stop(code = 0) {
  if (stopping) return;
  stopping = true;
  say('stopping…');
  for (const child of children) child.kill('SIGTERM');
  stopDatabase();
  say('stopped; your data is kept in .local/ for the next `npm start`.');
  process.exit(code);
}
process.on('SIGINT', () => stop(0));
process.on('SIGTERM', () => stop(0));

try {
  run(bin('tsx'), ['scripts/migrate.ts'], { env: { ...process.env, ...env, DATABASE_OWNER_URL: ownerUrl } });
  run(bin('tsx'), ['scripts/seed.ts'], { env: { ...process.env, ...env, DATABASE_OWNER_URL: ownerUrl } });
  if (useCatcher) {
    children.push(
      startChild('mail', bin('tsx'), ['scripts/mail-catcher.ts'], {
        MAIL_CATCHER_SMTP_PORT: String(smtpPort),
        MAIL_CATCHER_HTTP_PORT: String(mailHttpPort),
        MAIL_CATCHER_STORE: join(localDir, 'mail'),
        LOCAL_FAKES_TOKEN: localFakesToken,
      }),
    );
  }
  if (useFakePayments) {
    children.push(
      startChild('payments', bin('tsx'), ['scripts/payments-fake.ts'], {
        PAYMENTS_FAKE_PORT: String(paymentsPort),
        PAYMENTS_FAKE_STORE: join(localDir, 'payments'),
        PAYMENTS_WEBHOOK_URL: `http://127.0.0.1:${port}/api/payments/webhook`,
        LOCAL_FAKES_TOKEN: localFakesToken,
      }),
    );
  }
  say('building the app…');
  run(bin('astro'), ['build'], { env: { ...process.env, ...env }, stdio: ['ignore', 'ignore', 'inherit'] });
  const server = startChild('app', 'node', [join(root, 'scripts', 'serve.mjs')], env);
  children.push(server);
  for (const child of children) child.on('exit', (c) => !stopping && (say('a service stopped; shutting down.'), stop(c ?? 1)));
  await waitForHttp(`http://127.0.0.1:${port}/api/health`);
} catch (error) {
  console.error(error instanceof Error ? error.message : error);
  stop(1);
}

/** The demo accounts people.csv lists for the start-up message, one per role. */
function demoAccounts() {
  const [, ...rows] = readFileSync(join(root, 'data', 'demo', 'people.csv'), 'utf8').trim().split(/\r?\n/);
  return rows.map((row) => row.split(',')).filter((cells) => cells[4]).map((cells) => `  ${cells[4].padEnd(10)} ${cells[0]}`);
}

const seconds = ((Date.now() - started) / 1000).toFixed(1);
console.log(`
Tallywood is ready at http://127.0.0.1:${port}  (${seconds} s)
${useCatcher ? `Local mailbox (sign-in links land here): http://127.0.0.1:${port}/mailbox\n` : ''}
Demo accounts (all invented; sign in with the address, then open the mailbox):
${demoAccounts().join('\n')}

Press Ctrl-C to stop. Your data stays in .local/ for the next start.
`);
