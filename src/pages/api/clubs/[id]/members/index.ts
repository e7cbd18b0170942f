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
  const invited = await db.transaction((tx) => inviteMember(tx, { clubId, email: input.email, role: input.role, invitedBy: actor.id, now: new Date() }));
  await noticeClubInvitation({ membershipId: invited.membershipId, email: invited.email, origin: url.origin, newAccount: invited.newAccount });
  return json({ membershipId: invited.membershipId, email: invited.email, state: 'invited' }, 201);
});
