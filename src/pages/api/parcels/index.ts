import { db } from '../../../db';
import { listParcelsForOwner } from '../../../db/parcels.queries';
import { endpoint, guard, json } from '../../../server/http';

/** The signed-in landowner's parcels. */
export const GET = endpoint(async ({ locals }) => {
  const actor = guard(locals.actor, 'parcel:list-own');
  return json({ parcels: await listParcelsForOwner(db, { ownerId: actor.id }) });
});
