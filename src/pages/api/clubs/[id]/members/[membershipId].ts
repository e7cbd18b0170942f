import { db } from '../../../../../db';
import { manageMembership } from '../../../../../db/clubs.commands';
import { manageMembershipSchema } from '../../../../../lib/clubs.schemas';
import { stewardedClub } from '../../../../../server/audit-access';
import { endpoint, guard, idParam, json, readJson } from '../../../../../server/http';

/** A steward removes a member (or withdraws an invitation), or makes them a steward or a member. */
export const POST = endpoint(async ({ locals, params, request }) => {
  const { actor, clubId } = stewardedClub(locals, params);
  guard(actor, 'club:manage', { clubId });
  const membershipId = idParam(params.membershipId, 'Membership');
  const { action } = await readJson(request, manageMembershipSchema);
  await db.transaction((tx) => manageMembership(tx, { clubId, membershipId, action, by: actor.id, now: new Date() }));
  return json({ membershipId, action });
});
