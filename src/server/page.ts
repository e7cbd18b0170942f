import type { Actor } from '../lib/actor';

/** For pages the middleware already guards: the actor is there, or the guard is broken. */
export function signedInActor(locals: App.Locals): Actor {
  if (!locals.actor) throw new Error('a guarded page was reached without a session');
  return locals.actor;
}
