import { db } from '../../../db';
import { recordHarvest } from '../../../db/field.commands';
import { harvestSchema } from '../../../lib/field.schemas';
import { endpoint, guard, json, readJson } from '../../../server/http';

/** What the tallies would be after this entry; nothing is saved. */
export const POST = endpoint(async ({ locals, request }) => {
  const actor = guard(locals.actor, 'field:check-in');
  const input = await readJson(request, harvestSchema);
  const { projection } = await recordHarvest(db, { forager: { id: actor.id, clubIds: actor.memberOfClubIds }, input, now: new Date(), preview: true });
  return json(projection);
});
