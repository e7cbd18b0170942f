import { db } from '../../../../db';
import { checkOut } from '../../../../db/field.commands';
import { notFound } from '../../../../lib/errors';
import { endpoint, guard, idParam, json } from '../../../../server/http';

/** Ends the visit. A visit left open ends by itself at the end of the parcel's local day. */
export const POST = endpoint(async ({ locals, params }) => {
  const actor = guard(locals.actor, 'field:check-in');
  if (!(await checkOut(db, { visitId: idParam(params.id, 'Visit'), foragerId: actor.id, now: new Date() }))) throw notFound('An open visit');
  return json({ checkedOut: true });
});
