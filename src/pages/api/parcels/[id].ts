import { db } from '../../../db';
import { findParcelForOwner } from '../../../db/parcels.queries';
import { notFound } from '../../../lib/errors';
import { isUuid } from '../../../lib/ids';
import { endpoint, guard, json } from '../../../server/http';

/** One of the landowner's parcels; another owner's parcel is answered as not found. */
export const GET = endpoint(async ({ locals, params }) => {
  const actor = guard(locals.actor, 'parcel:list-own');
  const parcel = isUuid(params.id) ? await findParcelForOwner(db, { parcelId: params.id, ownerId: actor.id }) : null;
  if (!parcel) throw notFound('Parcel');
  guard(actor, 'parcel:read', { ownerId: parcel.ownerId });
  return json({ parcel });
});
