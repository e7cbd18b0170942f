import { db } from '../../../../db';
import { verifyLandowner } from '../../../../db/accounts.queries';
import { notFound } from '../../../../lib/errors';
import { endpoint, guard, json, wantsRedirect } from '../../../../server/http';

/** An admin confirms that a person really manages the land they say they do. */
export const POST = endpoint(async ({ locals, params, request, redirect }) => {
  const admin = guard(locals.actor, 'landowner:verify');
  const verified = params.id ? await verifyLandowner(db, { userId: params.id, adminId: admin.id, now: new Date() }) : null;
  if (!verified) throw notFound('An unverified landowner with that id');
  return wantsRedirect(request) ? redirect('/accounts?verified=1', 303) : json({ verified });
});
