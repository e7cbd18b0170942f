import { db } from '../../../db';
import { fieldSyncEnvelopeSchema, parseSyncItems } from '../../../lib/field.schemas';
import { AppError } from '../../../lib/errors';
import { endpoint, guard, json, readJson } from '../../../server/http';
import { noticeBreach } from '../../../server/field-notices';
import { syncFieldItems } from '../../../server/field/sync';

/**
 * What a device recorded offline, sent when the connection returns (by the page, or by the service
 * worker's background sync with nobody looking): one result per item, in the order sent. The batch
 * names the forager who recorded it, and only that forager's sign-in may send it. Items are idempotent by key; refused items (a malformed one among them: the list is
 * read first, then each item) are recorded nowhere and carry a message.
 */
export const POST = endpoint(async ({ locals, request, url }) => {
  const actor = guard(locals.actor, 'field:check-in');
  const { foragerId, packAsOf, items } = await readJson(request, fieldSyncEnvelopeSchema);
  // A phone shared by two people keeps each one's records apart; one person's go only under their own sign-in.
  if (foragerId !== actor.id) {
    throw new AppError(409, 'other-forager', 'These were recorded on this phone by another account, so nothing was saved. Sign in as the forager who recorded them to send them.', 'foragerId');
  }
  // Each breach, over-on-sync or off-permit mail is written in its entry's transaction: a replay finds both and writes neither again.
  const results = await syncFieldItems(db, {
    forager: { id: actor.id, clubIds: actor.memberOfClubIds }, input: { packAsOf, items: parseSyncItems(items) },
    afterWrite: (tx, entry) => noticeBreach(tx, { entryId: entry.id, origin: url.origin }),
  });
  return json({ results });
});
