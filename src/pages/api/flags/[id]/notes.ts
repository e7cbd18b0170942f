import { db } from '../../../../db';
import { addFlagNote, flagAccess } from '../../../../db/flags.queries';
import { flagNoteSchema } from '../../../../lib/clubs.schemas';
import { notFound, signedOut } from '../../../../lib/errors';
import { endpoint, idParam, json, readJson } from '../../../../server/http';

/** A follow-up note on a flag, by the parcel's landowner or a steward of the club it was raised under. */
export const POST = endpoint(async ({ locals, params, request }) => {
  const actor = locals.actor;
  if (!actor) throw signedOut();
  const flagId = idParam(params.id, 'Flag');
  const access = await flagAccess(db, { flagId });
  const allowed = access && (access.ownerId === actor.id || (access.clubId !== null && actor.stewardOfClubIds.includes(access.clubId)));
  if (!allowed) throw notFound('Flag');
  const input = await readJson(request, flagNoteSchema);
  const note = await addFlagNote(db, { flagId, authorId: actor.id, note: input.note, handled: input.handled, now: new Date() });
  return json({ note }, 201);
});
