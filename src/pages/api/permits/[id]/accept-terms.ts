import { db } from '../../../../db';
import { acceptCurrentTerms } from '../../../../db/permits.lifecycle';
import { findPermitForHolder } from '../../../../db/permits.queries';
import { forbidden, notFound } from '../../../../lib/errors';
import { endpoint, guard, idParam, json } from '../../../../server/http';

/** The holder accepts the parcel's current terms (a club's steward accepts for the club). */
export const POST = endpoint(async ({ locals, params }) => {
  const actor = guard(locals.actor, 'permit:request');
  const permitId = idParam(params.id, 'Permit');
  const permit = await findPermitForHolder(db, { permitId, userId: actor.id, clubIds: actor.memberOfClubIds });
  if (!permit) throw notFound('Permit');
  if (permit.holderClubId && !actor.stewardOfClubIds.includes(permit.holderClubId)) {
    throw forbidden("The club's steward accepts the terms for a club permit.");
  }
  const updated = await db.transaction((tx) => acceptCurrentTerms(tx, { permitId, userId: actor.id, now: new Date() }));
  return json({ permit: { id: updated.id, state: updated.state } });
});
