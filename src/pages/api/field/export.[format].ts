import { db } from '../../../db';
import { downloadResponse, exportFormatParam, exportUsableParcels } from '../../../server/boundary-exports';
import { endpoint, guard } from '../../../server/http';

/** The boundaries and no-harvest zones of every parcel the forager may use (the field pack's), as a GeoJSON, KML or GPX download. */
export const GET = endpoint(async ({ locals, params }) => {
  const actor = guard(locals.actor, 'field:check-in');
  const format = exportFormatParam(params.format);
  return downloadResponse(await exportUsableParcels(db, { forager: { id: actor.id, clubIds: actor.memberOfClubIds }, format }));
});
