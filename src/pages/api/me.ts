import { effectiveRoles } from '../../lib/actor';
import { signedOut } from '../../lib/errors';
import { endpoint, json } from '../../server/http';

export const GET = endpoint(async ({ locals }) => {
  if (!locals.actor) throw signedOut();
  return json({ ...locals.actor, effectiveRoles: effectiveRoles(locals.actor) });
});
