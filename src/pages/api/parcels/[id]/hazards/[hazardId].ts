import { db } from '../../../../../db';
import { removeRule } from '../../../../../db/parcel-rules.queries';
import { notFound } from '../../../../../lib/errors';
import { endpoint, idParam, json } from '../../../../../server/http';
import { ownedParcel } from '../../../../../server/parcel-access';

export const DELETE = endpoint(async ({ locals, params }) => {
  const { actor, parcelId } = await ownedParcel(locals, params);
  if (!(await removeRule(db, { table: 'hazard', id: idParam(params.hazardId, 'Hazard'), parcelId, ownerId: actor.id }))) throw notFound('Hazard');
  return json({ removed: true });
});
