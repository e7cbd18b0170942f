import { db } from '../../../../db';
import { verifyLandowner } from '../../../../db/accounts.queries';
import { notFound } from '../../../../lib/errors';
import { noticeLandownerDecision } from '../../../../server/account-notices';
import { endpoint, guard, idParam, json, wantsRedirect } from '../../../../server/http';

/** An admin confirms that a person really manages the land they say they do; the landowner is e-mailed. */
export const POST = endpoint(async ({ locals, params, request, redirect, url }) => {
  const admin = guard(locals.actor, 'landowner:verify');
  const userId = idParam(params.id, 'An unverified landowner with that id');
  const verified = await verifyLandowner(db, { userId, adminId: admin.id, now: new Date() });
  if (!verified) throw notFound('An unverified landowner with that id');
  await noticeLandownerDecision({ to: verified.email, name: verified.name, origin: url.origin, verified: true });
  return wantsRedirect(request) ? redirect('/accounts?verified=1', 303) : json({ verified });
});
