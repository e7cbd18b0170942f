import { db } from '../../../db';
import { endpoint, guard, json } from '../../../server/http';
import { fieldPack } from '../../../server/field/pack';

/** The field pack: what the phone needs to decide check-ins with no signal. Private to the forager; never cached by a proxy. */
export const GET = endpoint(async ({ locals }) => {
  const actor = guard(locals.actor, 'field:check-in');
  const pack = await fieldPack(db, { forager: { id: actor.id, clubIds: actor.memberOfClubIds } });
  return json(pack, 200, { 'cache-control': 'private, no-store' });
});
