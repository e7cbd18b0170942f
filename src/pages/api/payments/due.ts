import { db } from '../../../db';
import { listFeesDue } from '../../../db/payments.queries';
import { endpoint, guard, json } from '../../../server/http';

/** Fees the signed-in person may pay now: on permits they hold, and on their clubs' permits when they steward. */
export const GET = endpoint(async ({ locals }) => {
  const actor = guard(locals.actor, 'permit:request');
  return json({ fees: await listFeesDue(db, { userId: actor.id, stewardOfClubIds: actor.stewardOfClubIds }) });
});
