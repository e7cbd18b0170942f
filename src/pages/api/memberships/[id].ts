import { db } from '../../../db';
import { answerInvitation, leaveClub } from '../../../db/clubs.commands';
import { answerMembershipSchema } from '../../../lib/clubs.schemas';
import { signedOut } from '../../../lib/errors';
import { endpoint, idParam, json, readJson } from '../../../server/http';

/** The member's own answer: accept or decline an invitation, or leave the club. */
export const POST = endpoint(async ({ locals, params, request }) => {
  const actor = locals.actor;
  if (!actor) throw signedOut();
  const membershipId = idParam(params.id, 'Membership');
  const { action } = await readJson(request, answerMembershipSchema);
  const now = new Date();
  await db.transaction(async (tx) => {
    if (action === 'leave') await leaveClub(tx, { membershipId, userId: actor.id, now });
    else await answerInvitation(tx, { membershipId, userId: actor.id, accept: action === 'accept', now });
  });
  return json({ membershipId, action });
});
