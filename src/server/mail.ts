import { MAIL_CATCHER_SMTP_PORT, MAIL_FROM, SMTP_URL, TALLYWOOD_LOCAL_MODE } from 'astro:env/server';
import nodemailer from 'nodemailer';
import { db } from '../db';
import type { Executor } from '../db/client';
import { mailDomain, useMailSender } from './jobs/send-mail';
import { log } from './log';
import { queueMail, type Mail } from './outbox';

export type { Mail, MailAttachment } from './outbox';
export { mailHtml } from './mail-html';

/** True while mail goes to the local catcher: only in local mode (a deployment without SMTP_URL does not start). */
export const usingMailCatcher = TALLYWOOD_LOCAL_MODE && !SMTP_URL;

export function isLoopback(address: string | undefined) {
  return address === '127.0.0.1' || address === '::1' || address === '::ffff:127.0.0.1';
}

/** Headers by which a proxy relays someone else's request, and the launcher's mark that one came with any (scripts/lib/forwarded.mjs). */
const forwardingHeaders = ['forwarded', 'x-forwarded-for', 'x-forwarded-host', 'x-forwarded-proto', 'x-forwarded-port', 'x-real-ip', 'x-tallywood-relayed'];

/**
 * The local mailbox shows every sign-in link, so it exists only in local mode and answers only a
 * request made on this machine: from the loopback socket itself, relayed by nobody. scripts/serve.mjs
 * removes forwarded headers from untrusted peers, so the address is the socket's, and marks a
 * request that came with any: a proxy on this machine relays strangers from loopback too.
 */
export function mayReadMailbox(request: Request, clientAddress: string | undefined) {
  return usingMailCatcher && isLoopback(clientAddress) && forwardingHeaders.every((name) => !request.headers.has(name));
}

const transport = nodemailer.createTransport(
  SMTP_URL ?? { host: '127.0.0.1', port: MAIL_CATCHER_SMTP_PORT, secure: false, ignoreTLS: true },
);

/** The `send-mail` job sends through this transport, with Message-IDs in the MAIL_FROM domain. */
export function useAppMailTransport() {
  useMailSender((message) => transport.sendMail(message), { domain: mailDomain(MAIL_FROM) });
}

/**
 * Puts one e-mail in the outbox (src/server/outbox.ts), in `tx` when the caller has a transaction:
 * the `send-mail` job sends it, trying again with backoff while the mail server is down. A mail with
 * a `dedupeKey` recorded before is not sent again. Throws only when the mail could not be recorded.
 */
export async function sendMail(mail: Mail, tx?: Executor) {
  return queueMail(tx ?? db, mail, { from: MAIL_FROM, log });
}
