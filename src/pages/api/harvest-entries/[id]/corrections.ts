import { db } from '../../../../db';
import { correctionSchema } from '../../../../lib/field.schemas';
import { endpoint, guard, idParam, json, readJson } from '../../../../server/http';
import { noticeBreach } from '../../../../server/field-notices';
import { correctEntry } from '../../../../server/field/correction';

/**
 * Corrects one of your entries (idempotent by key): signed quantities and a reason. It counts on
 * the day, visit and permit of the entry's chain; one that takes that day over needs
 * `acknowledgeOver`, and is flagged and told like any breach.
 */
export const POST = endpoint(async ({ locals, params, request, url }) => {
  const actor = guard(locals.actor, 'field:check-in');
  const entryId = idParam(params.id, 'The entry to correct');
  const input = await readJson(request, correctionSchema);
  // The landowner's mail is written with the correction: a replay finds both and writes neither again.
  const result = await correctEntry(db, {
    forager: { id: actor.id, clubIds: actor.memberOfClubIds }, entryId, input, afterWrite: async (tx, entry) => {
      if (entry.breach) await noticeBreach(tx, { entryId: entry.id, origin: url.origin });
    },
  });
  return json({ entry: result.entry, replayed: result.replayed, tallies: result.tallies }, result.replayed ? 200 : 201);
});
