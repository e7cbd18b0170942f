import { db } from '../../../../db';
import { listFlags } from '../../../../db/flags.queries';
import { endpoint, json } from '../../../../server/http';
import { ownedParcel } from '../../../../server/parcel-access';

/** Breaches and nearing tallies on the landowner's parcel, newest first, with their follow-up. */
export const GET = endpoint(async ({ locals, params }) => {
  const { actor, parcelId } = await ownedParcel(locals, params, 'parcel:read');
  return json({ flags: await listFlags(db, { ownerId: actor.id, parcelId }) });
});
