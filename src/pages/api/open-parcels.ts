import { db } from '../../db';
import { listOpenParcels } from '../../db/parcels.queries';
import { endpoint, guard, json } from '../../server/http';

/** Parcels open to access requests: name, area, rough location, species and seasons; nobody's activity. */
export const GET = endpoint(async ({ locals }) => {
  guard(locals.actor, 'permit:request');
  return json({ parcels: await listOpenParcels(db) });
});
