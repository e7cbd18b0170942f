import { db } from '../../../../db';
import { verifyLandowner } from '../../../../db/accounts.queries';
import { notFound } from '../../../../lib/errors';
import { noticeLandownerDecision } from '../../../../server/account-notices';
import { endpoint, guard, idParam, json, wantsRedirect } from '../../../../server/http';

/** An admin confirms that a person really manages the land they say they do; the landowner is e-mailed. */
export const POST = endpoint(async ({ locals, params, request, redirect, url }) => {
  const admin = guard(locals.actor, 'landowner:verify');
  const userId = idParam(params.id, 'An unverified landowner with that id');
  // The landowner's e-mail is written with the verification.
  const verified = await db.transaction(async (tx) => {
    const done = await verifyLandowner(tx, { userId, adminId: admin.id, now: new Date() });
    if (done) await noticeLandownerDecision(tx, { to: done.email, name: done.name, origin: url.origin, verified: true });
    return done;
  });
  if (!verified) throw notFound('An unverified landowner with that id');
  return wantsRedirect(request) ? redirect('/accounts?verified=1', 303) : json({ verified });
});
