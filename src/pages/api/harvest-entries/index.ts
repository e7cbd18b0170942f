import { db } from '../../../db';
import { harvestSchema } from '../../../lib/field.schemas';
import { endpoint, guard, json, readJson } from '../../../server/http';
import { noticeBreach } from '../../../server/field-notices';
import { recordHarvest } from '../../../server/field/harvest';

/**
 * Records a harvest entry (idempotent by key). An entry that would take a limit over is refused
 * with 409 unless `acknowledgeOver` is set; then it is flagged and the landowner told at once.
 */
export const POST = endpoint(async ({ locals, request, url }) => {
  const actor = guard(locals.actor, 'field:check-in');
  const input = await readJson(request, harvestSchema);
  // The landowner's mail is written with the entry: a replay finds both and writes neither again.
  const result = await recordHarvest(db, {
    forager: { id: actor.id, clubIds: actor.memberOfClubIds }, input, afterWrite: async (tx, entry) => {
      if (entry.breach) await noticeBreach(tx, { entryId: entry.id, origin: url.origin });
    },
  });
  return json({ entry: result.entry, replayed: result.replayed, tallies: result.tallies }, result.replayed ? 200 : 201);
});
