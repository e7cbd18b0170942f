import { db } from '../../../../db';
import { declineLandowner, verifyLandowner } from '../../../../db/accounts.queries';
import { landownerDecisionSchema } from '../../../../lib/accounts.schemas';
import { notFound } from '../../../../lib/errors';
import { noticeLandownerDecision } from '../../../../server/account-notices';
import { endpoint, guard, idParam, json, readJson } from '../../../../server/http';

/**
 * An admin's answer to a landowner who asked to be verified: verified, or declined with a reason.
 * Either way the landowner is e-mailed the outcome.
 */
export const POST = endpoint(async ({ locals, params, request, url }) => {
  const admin = guard(locals.actor, 'landowner:verify');
  const userId = idParam(params.id, 'An unverified landowner with that id');
  const decision = await readJson(request, landownerDecisionSchema);
  const now = new Date();
  const person =
    decision.outcome === 'verified'
      ? await verifyLandowner(db, { userId, adminId: admin.id, now })
      : await declineLandowner(db, { userId, adminId: admin.id, reason: decision.reason, now });
  if (!person) throw notFound('An unverified landowner with that id');
  await noticeLandownerDecision({
    to: person.email, name: person.name, origin: url.origin, verified: decision.outcome === 'verified', reason: decision.outcome === 'declined' ? decision.reason : undefined,
  });
  return json({ outcome: decision.outcome, account: { id: person.id, email: person.email } });
});
