import { defineMiddleware } from 'astro:middleware';
import { db } from './db';
import { findActorBySession } from './db/accounts.queries';
import { mayEver, type Action } from './lib/permissions';
import { sessionCookieNames } from './server/auth';

/** Pages and the action a visitor's roles must allow to open them. API routes guard themselves. */
const pageRules: [prefix: string, action: Action][] = [
  ['/land', 'parcel:list-own'],
  ['/my-permits', 'permit:request'],
  ['/club', 'club:read'],
  ['/catalogue', 'catalogue:read'],
  ['/accounts', 'account:list'],
];

export const onRequest = defineMiddleware(async (context, next) => {
  const token = sessionCookieNames.map((name) => context.cookies.get(name)?.value).find(Boolean);
  context.locals.actor = token ? await findActorBySession(db, { sessionToken: token, now: new Date() }) : null;

  const path = context.url.pathname;
  const rule = pageRules.find(([prefix]) => path === prefix || path.startsWith(`${prefix}/`));
  if (rule) {
    if (!context.locals.actor) return context.redirect(`/sign-in?next=${encodeURIComponent(path)}`, 303);
    if (!mayEver(context.locals.actor, rule[1])) return context.rewrite('/forbidden');
  }
  return next();
});
