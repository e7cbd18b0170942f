import { db } from '../../../db';
import { harvestSchema } from '../../../lib/field.schemas';
import { endpoint, guard, json, readJson } from '../../../server/http';
import { previewHarvest } from '../../../server/field/harvest';

/** What the tallies would be after this entry; nothing is saved. */
export const POST = endpoint(async ({ locals, request }) => {
  const actor = guard(locals.actor, 'field:check-in');
  const input = await readJson(request, harvestSchema);
  return json(await previewHarvest(db, { forager: { id: actor.id, clubIds: actor.memberOfClubIds }, input }));
});
