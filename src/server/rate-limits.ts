import { SIGN_IN_LIMIT_PER_CLIENT_PER_HOUR, SIGN_IN_LIMIT_PER_HOUR } from 'astro:env/server';
import { RateLimiterDrizzle, RateLimiterRes } from 'rate-limiter-flexible';
import { db } from '../db';
import { rateLimits } from '../db/schema';
import { tooMany } from '../lib/errors';

/**
 * Every action that sends e-mail is limited before it changes anything or sends, by
 * rate-limiter-flexible's Drizzle store: one atomic upsert per request in `rate_limits`, shared by
 * every instance of the app. A refused request is a 429 that says when to try again, and nothing
 * was changed or sent.
 */
type Limit = { points: number; seconds: number; refusal: (wait: string) => string };

export const limits = {
  signInPerAddress: {
    points: SIGN_IN_LIMIT_PER_HOUR,
    seconds: 60 * 60,
    refusal: (wait) => `We have sent ${SIGN_IN_LIMIT_PER_HOUR} sign-in e-mails to this address in the last hour. Use the newest one, or try again in ${wait}.`,
  },
  signInPerClient: {
    points: SIGN_IN_LIMIT_PER_CLIENT_PER_HOUR,
    seconds: 60 * 60,
    refusal: (wait) => `Too many sign-in e-mails have been asked for from your network in the last hour. Try again in ${wait}.`,
  },
  /** Invitations, grants, access requests, decisions and revocations: each e-mails someone else. */
  mailToOthers: {
    points: 60,
    seconds: 60 * 60,
    refusal: (wait) => `You have sent 60 e-mails to other people through Tallywood in the last hour (invitations, grants, requests, decisions). Try again in ${wait}.`,
  },
  /** One season report, for one parcel, club and day, from one sender. */
  seasonReportSend: {
    points: 1,
    seconds: 60,
    refusal: (wait) => `This report went to the landowner less than a minute ago; it was not sent twice. Send it again in ${wait} if you need to.`,
  },
} satisfies Record<string, Limit>;

export type LimitName = keyof typeof limits;

const limiters = new Map<LimitName, RateLimiterDrizzle>();
function limiterFor(name: LimitName) {
  let limiter = limiters.get(name);
  if (!limiter) {
    const { points, seconds } = limits[name];
    limiter = new RateLimiterDrizzle({ storeClient: db, schema: rateLimits, keyPrefix: name, points, duration: seconds });
    limiters.set(name, limiter);
  }
  return limiter;
}

const waitInWords = (ms: number) => {
  const minutes = Math.ceil(ms / 60_000);
  return ms < 60_000 ? `${Math.max(1, Math.ceil(ms / 1000))} seconds` : minutes === 1 ? 'a minute' : `${minutes} minutes`;
};

/** Spends one point of `name` for `key`; a 429 when the window has none left. Store failures propagate (500). */
export async function spend(name: LimitName, key: string): Promise<void> {
  try {
    await limiterFor(name).consume(key);
  } catch (refused) {
    if (refused instanceof RateLimiterRes) throw tooMany(limits[name].refusal(waitInWords(refused.msBeforeNext)), Math.max(1, Math.ceil(refused.msBeforeNext / 1000)));
    throw refused;
  }
}
