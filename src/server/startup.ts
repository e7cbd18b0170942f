import {
  AUTH_SECRET, DATABASE_URL, MAIL_RETRY_DELAY_SECONDS, PERMIT_SIGNING_KEY, PUBLIC_HOSTNAME, SMTP_URL, STRIPE_API_URL, STRIPE_SECRET_KEY, STRIPE_WEBHOOK_SECRET, TALLYWOOD_LOCAL_MODE, TRUSTED_PROXIES,
} from 'astro:env/server';
import { db } from '../db';
import { deploymentProblems } from './deployment';
import { startJobs, stopJobs } from './jobs/queue';
import { log } from './log';
import { useAppMailTransport } from './mail';
import { useAppRefunder } from './payments';

/*
 * Imported by the built server entry (astro.config.mjs, startupCheck) before it starts listening:
 * a deployment missing what it must set says what to set and does not start.
 */
const problems = deploymentProblems({
  localMode: TALLYWOOD_LOCAL_MODE,
  publicHostname: PUBLIC_HOSTNAME,
  smtpUrl: SMTP_URL,
  authSecret: AUTH_SECRET,
  stripeSecretKey: STRIPE_SECRET_KEY,
  stripeWebhookSecret: STRIPE_WEBHOOK_SECRET,
  stripeApiUrl: STRIPE_API_URL,
  trustedProxies: TRUSTED_PROXIES,
  permitSigningKey: PERMIT_SIGNING_KEY,
  servedByLauncher: process.env.ASTRO_NODE_AUTOSTART === 'disabled',
});
if (problems.length > 0) {
  console.error(`Tallywood will not start until this is set:\n${problems.map((p) => `  - ${p}`).join('\n')}`);
  process.exit(1);
}

/*
 * The job queue (src/server/jobs/) starts with the server. If the database does not answer yet, it is
 * tried again every minute; requests are served meanwhile. scripts/serve.mjs stops it on SIGTERM or
 * SIGINT through the function left under `Symbol.for('tallywood.shutdown')`: a job being run finishes first.
 */
let retry: NodeJS.Timeout | undefined;
useAppMailTransport();
useAppRefunder();
function startQueue() {
  startJobs({ db, databaseUrl: DATABASE_URL, log, queueSettings: { 'send-mail': { retryDelay: MAIL_RETRY_DELAY_SECONDS } } }).catch((error: unknown) => {
    log.error({ err: error }, 'jobs: the queue did not start; trying again in a minute');
    retry = setTimeout(startQueue, 60_000).unref();
  });
}
startQueue();
(globalThis as Record<symbol, unknown>)[Symbol.for('tallywood.shutdown')] = async () => {
  clearTimeout(retry);
  await stopJobs();
};
