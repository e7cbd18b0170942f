import { PUBLIC_HOSTNAME } from 'astro:env/server';
import { mailHtml, sendMail } from './mail';
import type { ReminderDelivery } from './reminders';

/** Sends one reminder through the app's mail, once by its dedupe key. */
export async function deliverReminder(mail: ReminderDelivery) {
  await sendMail({
    purpose: mail.purpose,
    to: mail.to,
    dedupeKey: mail.dedupeKey,
    subject: mail.subject,
    text: mail.text,
    html: mailHtml({ heading: mail.heading, paragraphs: mail.paragraphs, action: mail.action }),
  });
}

/**
 * The address links in a reminder start with. A job answers no request to take it from, so it is the
 * public host name, or on this machine (local mode) the port the server listens on (scripts/serve.mjs).
 */
export function siteOrigin(): string {
  return PUBLIC_HOSTNAME ? `https://${PUBLIC_HOSTNAME}` : `http://127.0.0.1:${process.env.PORT ?? '4321'}`;
}
