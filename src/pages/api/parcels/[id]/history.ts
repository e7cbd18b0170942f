import { db } from '../../../../db';
import { listParcelHistory } from '../../../../db/parcel-history.queries';
import { endpoint, json } from '../../../../server/http';
import { ownedParcel } from '../../../../server/parcel-access';

/** The parcel's history, newest first: who changed what may be taken, when, in words. */
export const GET = endpoint(async ({ locals, params }) => {
  const { actor, parcelId } = await ownedParcel(locals, params, 'parcel:read');
  return json({ history: await listParcelHistory(db, { parcelId, ownerId: actor.id }) });
});
