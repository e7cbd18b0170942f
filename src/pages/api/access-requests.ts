import { db } from '../../db';
import { requestAccess } from '../../db/permits.commands';
import { accessRequestSchema } from '../../lib/permits.schemas';
import { endpoint, guard, json, readJson } from '../../server/http';
import { noticeAccessRequested } from '../../server/notices';
import { spend } from '../../server/rate-limits';

/** A forager asks for access to a parcel (a steward may ask for their club); the landowner is e-mailed. */
export const POST = endpoint(async ({ locals, request, url }) => {
  const actor = guard(locals.actor, 'permit:request');
  const input = await readJson(request, accessRequestSchema);
  await spend('mailToOthers', actor.id);
  // The landowner's e-mail is written with the request: it exists exactly when the request does.
  const { permitId } = await db.transaction(async (tx) => {
    const asked = await requestAccess(tx, { ...input, requesterId: actor.id, now: new Date() });
    await noticeAccessRequested(tx, { permitId: asked.permitId, origin: url.origin, note: input.note });
    return asked;
  });
  return json({ permit: { id: permitId, state: 'requested' } }, 201);
});
