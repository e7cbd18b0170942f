import { db } from '../../../../../db';
import { inviteMember } from '../../../../../db/clubs.commands';
import { inviteMemberSchema } from '../../../../../lib/clubs.schemas';
import { stewardedClub } from '../../../../../server/audit-access';
import { noticeClubInvitation } from '../../../../../server/club-notices';
import { endpoint, guard, json, readJson } from '../../../../../server/http';
import { spend } from '../../../../../server/rate-limits';

/** A steward invites someone by e-mail; they accept from Club after signing in. */
export const POST = endpoint(async ({ locals, params, request, url }) => {
  const { actor, clubId } = stewardedClub(locals, params);
  guard(actor, 'club:manage', { clubId });
  const input = await readJson(request, inviteMemberSchema);
  await spend('mailToOthers', actor.id);
  // The invitation and its e-mail are written together, or neither is.
  const invited = await db.transaction(async (tx) => {
    const made = await inviteMember(tx, { clubId, email: input.email, role: input.role, invitedBy: actor.id, now: new Date() });
    await noticeClubInvitation(tx, { membershipId: made.membershipId, email: made.email, origin: url.origin, newAccount: made.newAccount });
    return made;
  });
  return json({ membershipId: invited.membershipId, email: invited.email, state: 'invited' }, 201);
});
