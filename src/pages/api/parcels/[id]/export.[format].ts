import { db } from '../../../../db';
import { notFound } from '../../../../lib/errors';
import { downloadResponse, exportFormatParam, exportParcelForOwner } from '../../../../server/boundary-exports';
import { endpoint, guard, idParam } from '../../../../server/http';

/** The parcel's boundary and no-harvest zones as a GeoJSON, KML or GPX download; another owner's parcel is not found. */
export const GET = endpoint(async ({ locals, params }) => {
  const actor = guard(locals.actor, 'parcel:list-own');
  const parcelId = idParam(params.id, 'Parcel');
  const format = exportFormatParam(params.format);
  const file = await exportParcelForOwner(db, { parcelId, ownerId: actor.id, format });
  if (!file) throw notFound('Parcel');
  return downloadResponse(file);
});
