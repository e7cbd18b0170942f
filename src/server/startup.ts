import {
  AUTH_SECRET, PERMIT_SIGNING_KEY, PUBLIC_HOSTNAME, SMTP_URL, STRIPE_API_URL, STRIPE_SECRET_KEY, STRIPE_WEBHOOK_SECRET, TALLYWOOD_LOCAL_MODE, TRUSTED_PROXIES,
} from 'astro:env/server';
import { deploymentProblems } from './deployment';

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
