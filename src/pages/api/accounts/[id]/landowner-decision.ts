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
  // The landowner's e-mail is written with the decision.
  const person = await db.transaction(async (tx) => {
    const decided =
      decision.outcome === 'verified'
        ? await verifyLandowner(tx, { userId, adminId: admin.id, now })
        : await declineLandowner(tx, { userId, adminId: admin.id, reason: decision.reason, now });
    if (decided) {
      await noticeLandownerDecision(tx, {
        to: decided.email, name: decided.name, origin: url.origin, verified: decision.outcome === 'verified', reason: decision.outcome === 'declined' ? decision.reason : undefined,
      });
    }
    return decided;
  });
  if (!person) throw notFound('An unverified landowner with that id');
  return json({ outcome: decision.outcome, account: { id: person.id, email: person.email } });
});
