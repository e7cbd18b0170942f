import { Auth, type AuthConfig } from '@auth/core';
import Nodemailer from '@auth/core/providers/nodemailer';
import { DrizzleAdapter } from '@auth/drizzle-adapter';
import { AUTH_SECRET, MAIL_CATCHER_SMTP_PORT, SIGN_IN_LIMIT_PER_CLIENT_PER_HOUR, SIGN_IN_LIMIT_PER_HOUR, SMTP_URL } from 'astro:env/server';
import { db } from '../db';
import { countRecentMail } from '../db/mail.queries';
import { accounts, sessions, users, verificationTokens } from '../db/schema';
import { AppError, tooMany } from '../lib/errors';
import { mailHtml, sendMail } from './mail';

/** Carries the requester's address from our sign-in endpoint into the mail record. */
const clientHeader = 'x-tallywood-client-address';
export const sessionCookieNames = ['__Secure-authjs.session-token', 'authjs.session-token'];

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
      async sendVerificationRequest({ identifier, url, request }) {
        const host = new URL(url).host;
        await sendMail({
          purpose: 'sign-in',
          to: identifier,
          subject: 'Your Tallywood sign-in link',
          clientAddress: request.headers.get(clientHeader),
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
};

/**
 * Sends a sign-in link through Auth.js, after the per-address and per-client limits. Auth.js
 * wants a CSRF token with the form, so this asks it for one first, as a browser would.
 */
export async function requestSignInLink({ email, origin, next = '/', clientAddress, now }: { email: string; origin: string; next?: string; clientAddress: string | null; now: Date }) {
  const since = new Date(now.getTime() - 60 * 60 * 1000);
  const recent = await countRecentMail(db, { purpose: 'sign-in', toAddress: email, clientAddress, since });
  if (recent.byAddress >= SIGN_IN_LIMIT_PER_HOUR) {
    throw tooMany(`We have sent ${recent.byAddress} sign-in e-mails to this address in the last hour. Use the newest one, or try again later.`);
  }
  if (recent.byClient >= SIGN_IN_LIMIT_PER_CLIENT_PER_HOUR) {
    throw tooMany('Too many sign-in e-mails have been asked for from your network in the last hour. Try again later.');
  }

  const csrf = await Auth(new Request(`${origin}/api/auth/csrf`), authConfig);
  const { csrfToken } = (await csrf.json()) as { csrfToken: string };
  const cookie = csrf.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ');
  const response = await Auth(
    new Request(`${origin}/api/auth/signin/nodemailer`, {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded', cookie, [clientHeader]: clientAddress ?? '' },
      body: new URLSearchParams({ email, csrfToken, callbackUrl: `${origin}${next}` }),
    }),
    authConfig,
  );
  const location = response.headers.get('location') ?? '';
  // Auth.js answers a redirect: to its verify-request page when the mail went, to the error page when not.
  if (response.status !== 302 || location.includes('error=')) {
    throw new AppError(502, 'mail-failed', 'We could not send the sign-in e-mail just now. Try again in a minute.');
  }
}
