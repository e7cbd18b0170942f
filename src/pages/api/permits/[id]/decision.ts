import { db } from '../../../../db';
import { findPermitForOwner } from '../../../../db/permits.queries';
import { decideRequest } from '../../../../db/permits.commands';
import { notFound } from '../../../../lib/errors';
import { decisionSchema } from '../../../../lib/permits.schemas';
import { endpoint, guard, idParam, json, readJson } from '../../../../server/http';
import { noticeDecision } from '../../../../server/notices';

/** The landowner approves or declines an access request; the requester is told by e-mail. */
export const POST = endpoint(async ({ locals, params, request, url }) => {
  const actor = guard(locals.actor, 'parcel:list-own');
  const permitId = idParam(params.id, 'Permit');
  const existing = await findPermitForOwner(db, { permitId, ownerId: actor.id });
  if (!existing) throw notFound('Permit');
  guard(actor, 'request:decide', { ownerId: actor.id });
  const input = await readJson(request, decisionSchema);
  // The requester's e-mail is written in the decision's transaction: it goes exactly when the decision stands.
  const permit = await db.transaction(async (tx) => {
    const decided = await decideRequest(tx, { permitId, ownerId: actor.id, ...input, now: new Date() });
    await noticeDecision(tx, { permitId, origin: url.origin, approved: input.decision === 'approve', message: input.message });
    return decided;
  });
  return json({ permit: { id: permit.id, state: permit.state } });
});
