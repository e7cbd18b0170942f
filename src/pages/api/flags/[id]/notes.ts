import { db } from '../../../../db';
import { addFlagNote, flagAccess } from '../../../../db/flags.queries';
import { flagNoteSchema } from '../../../../lib/clubs.schemas';
import { notFound, signedOut } from '../../../../lib/errors';
import { sendFlagNoteToMember } from '../../../../server/field-notices';
import { endpoint, idParam, json, readJson } from '../../../../server/http';
import { spend } from '../../../../server/rate-limits';

/**
 * A follow-up note on a flag, by the parcel's landowner or a steward of the club it was raised under;
 * with `sendToMember`, also e-mailed to the forager whose entry it is (`sentTo` names them).
 */
export const POST = endpoint(async ({ locals, params, request, url }) => {
  const actor = locals.actor;
  if (!actor) throw signedOut();
  const flagId = idParam(params.id, 'Flag');
  const access = await flagAccess(db, { flagId });
  const allowed = access && (access.ownerId === actor.id || (access.clubId !== null && actor.stewardOfClubIds.includes(access.clubId)));
  if (!allowed) throw notFound('Flag');
  const input = await readJson(request, flagNoteSchema);
  if (input.sendToMember) await spend('mailToOthers', actor.id);
  // The forager's e-mail is written with the note.
  const { note, sentTo } = await db.transaction(async (tx) => ({
    note: await addFlagNote(tx, { flagId, authorId: actor.id, note: input.note, handled: input.handled, now: new Date() }),
    sentTo: input.sendToMember ? await sendFlagNoteToMember(tx, { flagId, authorId: actor.id, note: input.note, origin: url.origin }) : null,
  }));
  return json({ note, sentTo }, 201);
});
