import { AsyncLocalStorage } from 'node:async_hooks';
import { Auth, type AuthConfig } from '@auth/core';
import Nodemailer from '@auth/core/providers/nodemailer';
import { DrizzleAdapter } from '@auth/drizzle-adapter';
import { AUTH_SECRET, MAIL_CATCHER_SMTP_PORT, SMTP_URL } from 'astro:env/server';
import { db } from '../db';
import { accounts, sessions, users, verificationTokens } from '../db/schema';
import { AppError } from '../lib/errors';
import { mailHtml, sendMail } from './mail';
import { spend } from './rate-limits';
import { log } from './log';

/**
 * Carries the requester's address from our sign-in endpoint into the mail record, in the process
 * only: nothing a request sends can set it.
 */
const signInClient = new AsyncLocalStorage<string | null>();

/** Auth.js names the session cookie by the scheme: `__Secure-` over HTTPS, plain over HTTP. */
export const sessionCookieNames = ['__Secure-authjs.session-token', 'authjs.session-token'];

/**
 * The one session cookie a request may sign in with: over HTTPS only the `__Secure-` one (a browser
 * keeps it only from a secure origin, so nobody on the network can plant it), over HTTP only the
 * plain one. The scheme is the socket's own unless a trusted proxy said otherwise (scripts/serve.mjs).
 */
export function sessionCookieName(url: URL) {
  return url.protocol === 'https:' ? '__Secure-authjs.session-token' : 'authjs.session-token';
}

/**
 * The Auth.js routes a browser may reach: only the e-mailed link. Sign-in links are asked for at
 * /api/sign-in (which checks the account and the limits and then calls Auth.js in the process), and
 * sessions end at /api/sign-out. Everything else under /api/auth answers 404, however its path is
 * spelled (a doubled slash, an encoded one, a dot segment).
 */
export const authRoutesOpenToBrowsers = new Set(['GET /api/auth/callback/nodemailer']);

/** An ordinary user mistake, not a fault: Auth.js's name for an expired, used or mistyped link. */
const userMistakes = new Set(['Verification']);

export const authConfig: AuthConfig = {
  adapter: DrizzleAdapter(db, {
    usersTable: users,
    accountsTable: accounts,
    sessionsTable: sessions,
    verificationTokensTable: verificationTokens,
  }),
  providers: [
    Nodemailer({
      server: SMTP_URL ?? { host: '127.0.0.1', port: MAIL_CATCHER_SMTP_PORT, secure: false, ignoreTLS: true },
      maxAge: 30 * 60,
      async sendVerificationRequest({ identifier, url }) {
        const host = new URL(url).host;
        await sendMail({
          purpose: 'sign-in',
          to: identifier,
          subject: 'Your Tallywood sign-in link',
          clientAddress: signInClient.getStore() ?? null,
          text: `Sign in to Tallywood on ${host} by opening this link within 30 minutes:\n\n${url}\n\nIf you did not ask for it, ignore this e-mail; nobody can sign in without the link.\n`,
          html: mailHtml({
            heading: 'Sign in to Tallywood',
            paragraphs: [`Use this button within 30 minutes to sign in on ${host}.`, 'If you did not ask for it, ignore this e-mail; nobody can sign in without the link.'],
            action: { label: 'Sign in', url },
          }),
        });
      },
    }),
  ],
  session: { strategy: 'database', maxAge: 30 * 24 * 60 * 60 },
  secret: AUTH_SECRET,
  trustHost: true,
  basePath: '/api/auth',
  pages: { signIn: '/sign-in', verifyRequest: '/sign-in/check-email', error: '/sign-in/problem' },
  logger: {
    // A used or expired link is the visitor's mistake, shown to them on /sign-in/problem: one line here, no stack.
    error(error) {
      const type = (error as { type?: string }).type ?? error.name;
      if (userMistakes.has(type)) log.warn({ type }, 'sign-in link refused');
      else log.error({ err: error }, 'sign-in failed');
    },
  },
};

/**
 * Spends one sign-in e-mail of the client's and of the address's hourly allowance (429 when either
 * is used up). The client is the socket's address, or the one a trusted proxy names.
 */
export async function spendSignInAllowance({ email, clientAddress }: { email: string; clientAddress: string | null }) {
  if (clientAddress) await spend('signInPerClient', clientAddress);
  await spend('signInPerAddress', email.trim().toLowerCase());
}

/**
 * Sends a sign-in link through Auth.js; spend the allowance first (`spendSignInAllowance`). Auth.js
 * wants a CSRF token with the form, so this asks it for one first, as a browser would.
 */
export async function sendSignInLink({ email, origin, next = '/', clientAddress }: { email: string; origin: string; next?: string; clientAddress: string | null }) {
  const csrf = await Auth(new Request(`${origin}/api/auth/csrf`), authConfig);
  const { csrfToken } = (await csrf.json()) as { csrfToken: string };
  const cookie = csrf.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ');
  const response = await signInClient.run(clientAddress, () =>
    Auth(
      new Request(`${origin}/api/auth/signin/nodemailer`, {
        method: 'POST',
        headers: { 'content-type': 'application/x-www-form-urlencoded', cookie },
        body: new URLSearchParams({ email, csrfToken, callbackUrl: `${origin}${next}` }),
      }),
      authConfig,
    ),
  );
  const location = response.headers.get('location') ?? '';
  // Auth.js answers a redirect: to its verify-request page when the mail went, to the error page when not.
  if (response.status !== 302 || location.includes('error=')) {
    throw new AppError(502, 'mail-failed', 'We could not send the sign-in e-mail just now. Try again in a minute.');
  }
}
