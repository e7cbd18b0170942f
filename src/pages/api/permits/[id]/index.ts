import { db } from '../../../../db';
import { findPermitForHolder, findPermitForOwner, listPermitEvents } from '../../../../db/permits.queries';
import { notFound, signedOut } from '../../../../lib/errors';
import { endpoint, idParam, json } from '../../../../server/http';

/** One permit with its history, for its landowner or its holder (or a member of the holding club). */
export const GET = endpoint(async ({ locals, params }) => {
  const actor = locals.actor;
  if (!actor) throw signedOut();
  const permitId = idParam(params.id, 'Permit');
  const permit =
    (await findPermitForOwner(db, { permitId, ownerId: actor.id })) ??
    (await findPermitForHolder(db, { permitId, userId: actor.id, clubIds: actor.memberOfClubIds }));
  if (!permit) throw notFound('Permit');
  return json({ permit: { ...permit, history: await listPermitEvents(db, { permitIds: [permitId] }) } });
});
