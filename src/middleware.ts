import type { APIContext, MiddlewareNext } from 'astro';
import { defineMiddleware } from 'astro:middleware';
import { db } from './db';
import { findActorBySession } from './db/accounts.queries';
import { mayEver, type Action } from './lib/permissions';
import { sessionCookieName } from './server/auth';
import { log } from './server/log';

/** Pages and the action a visitor's roles must allow to open them. API routes guard themselves. */
const pageRules: [prefix: string, action: Action][] = [
  ['/field', 'field:check-in'],
  ['/land', 'parcel:list-own'],
  ['/requests', 'parcel:list-own'],
  ['/my-permits', 'permit:request'],
  ['/permits', 'permit:read-card'],
  ['/ledger', 'ledger:read-own'],
  ['/club', 'club:join'],
  ['/reports', 'report:read'],
  ['/catalogue/species', 'catalogue:edit'],
  ['/catalogue', 'catalogue:read'],
  ['/accounts', 'account:list'],
  ['/settings', 'reminders:edit-own'],
];

/**
 * Each request gets an id, returned in `x-request-id` so a person can quote it, and one log line
 * when it is answered: method, route pattern, status and milliseconds (src/server/log.ts says what
 * never goes in). Map tiles, many and public, are logged at debug level only.
 */
export const onRequest = defineMiddleware(async (context, next) => {
  const started = performance.now();
  const requestId = crypto.randomUUID();
  context.locals.log = log.child({ requestId });
  const response = await answer(context, next).catch((error: unknown) => {
    context.locals.log.error({ err: error, route: context.routePattern }, 'request failed');
    throw error;
  });
  const line = { method: context.request.method, route: context.routePattern, status: response.status, ms: Math.round((performance.now() - started) * 10) / 10 };
  if (context.url.pathname.startsWith('/tiles/')) context.locals.log.debug(line, 'answered');
  else context.locals.log.info(line, 'answered');
  try {
    response.headers.set('x-request-id', requestId);
  } catch {
    // A response with immutable headers (Response.redirect) goes without the id.
  }
  return response;
});

async function answer(context: APIContext, next: MiddlewareNext): Promise<Response> {
  // Map tiles are public and many: no session lookup for them.
  if (context.url.pathname.startsWith('/tiles/')) {
    context.locals.actor = null;
    return next();
  }
  const token = context.cookies.get(sessionCookieName(context.url))?.value;
  context.locals.actor = token ? await findActorBySession(db, { sessionToken: token, now: new Date() }) : null;

  const path = context.url.pathname;
  const rule = pageRules.find(([prefix]) => path === prefix || path.startsWith(`${prefix}/`));
  if (rule) {
    if (!context.locals.actor) return context.redirect(`/sign-in?next=${encodeURIComponent(path)}`, 303);
    if (!mayEver(context.locals.actor, rule[1])) return context.rewrite('/forbidden');
  }
  return next();
}
