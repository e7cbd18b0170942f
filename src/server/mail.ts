import { MAIL_CATCHER_SMTP_PORT, MAIL_FROM, SMTP_URL, TALLYWOOD_LOCAL_MODE } from 'astro:env/server';
import nodemailer from 'nodemailer';
import { db } from '../db';
import type { Executor } from '../db/client';
import { mailDomain, useMailSender } from './jobs/send-mail';
import { log } from './log';
import { queueMail, type Mail } from './outbox';

export type { Mail, MailAttachment } from './outbox';

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

const escape = (s: string) => s.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);

/** The one frame every Tallywood e-mail's HTML part shares. */
export function mailHtml({ heading, paragraphs, action }: { heading: string; paragraphs: string[]; action?: { label: string; url: string } }) {
  const body = paragraphs.map((p) => `<p style="margin:0 0 12px">${escape(p)}</p>`).join('');
  const button = action
    ? `<p style="margin:20px 0"><a href="${escape(action.url)}" style="background:#3d6437;color:#fff;padding:10px 18px;border-radius:6px;text-decoration:none;font-weight:600">${escape(action.label)}</a></p><p style="margin:0 0 12px;font-size:13px;color:#5c4431">Or paste this address into your browser: ${escape(action.url)}</p>`
    : '';
  return `<!doctype html><html><body style="font-family:'Work Sans',Arial,sans-serif;color:#1f2f1e;background:#f8f5f1;padding:24px"><div style="max-width:520px;margin:auto;background:#fff;border-radius:8px;padding:24px"><p style="margin:0 0 16px;font-weight:700;color:#3d6437">Tallywood</p><h1 style="font-size:20px;margin:0 0 16px">${escape(heading)}</h1>${body}${button}</div></body></html>`;
}
