import { db } from '../../../db';
import { fieldSyncEnvelopeSchema, parseSyncItems } from '../../../lib/field.schemas';
import { toldFlagKinds } from '../../../lib/flag-words';
import { endpoint, guard, json, readJson } from '../../../server/http';
import { noticeBreach } from '../../../server/field-notices';
import { syncFieldItems } from '../../../server/field/sync';

/**
 * What a device recorded offline, sent when the connection returns: one result per item, in the
 * order sent. Items are idempotent by key; refused items (a malformed one among them: the list is
 * read first, then each item) are recorded nowhere and carry a message.
 */
export const POST = endpoint(async ({ locals, request, url }) => {
  const actor = guard(locals.actor, 'field:check-in');
  const { packAsOf, items } = await readJson(request, fieldSyncEnvelopeSchema);
  const results = await syncFieldItems(db, { forager: { id: actor.id, clubIds: actor.memberOfClubIds }, input: { packAsOf, items: parseSyncItems(items) } });
  // Told on a replay too: whatever did not go the first time (a lost answer, a failed send) goes now, and nothing twice.
  for (const r of results) {
    if (r.entryId && r.flag && toldFlagKinds.includes(r.flag.kind)) await noticeBreach({ entryId: r.entryId, origin: url.origin });
  }
  return json({ results });
});
