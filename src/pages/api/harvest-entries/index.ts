import { db } from '../../../db';
import { recordHarvest } from '../../../db/field.commands';
import { harvestSchema } from '../../../lib/field.schemas';
import { endpoint, guard, json, readJson } from '../../../server/http';
import { noticeBreach } from '../../../server/field-notices';

/**
 * Records a harvest entry (idempotent by key). An entry that would take a limit over is refused
 * with 409 unless `acknowledgeOver` is set; then it is flagged and the landowner told at once.
 */
export const POST = endpoint(async ({ locals, request, url }) => {
  const actor = guard(locals.actor, 'field:check-in');
  const input = await readJson(request, harvestSchema);
  const result = await recordHarvest(db, { forager: { id: actor.id, clubIds: actor.memberOfClubIds }, input, now: new Date() });
  if (result.entry?.breach && !result.replayed) await noticeBreach({ entryId: result.entry.id, origin: url.origin });
  return json({ entry: result.entry, replayed: result.replayed, tallies: result.projection?.tallies ?? null }, result.replayed ? 200 : 201);
});
