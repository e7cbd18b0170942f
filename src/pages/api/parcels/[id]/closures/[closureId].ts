import { db } from '../../../../../db';
import { removeRule } from '../../../../../db/parcel-rules.queries';
import { notFound } from '../../../../../lib/errors';
import { endpoint, idParam, json } from '../../../../../server/http';
import { ownedParcel } from '../../../../../server/parcel-access';

export const DELETE = endpoint(async ({ locals, params }) => {
  const { actor, parcelId } = await ownedParcel(locals, params);
  if (!(await removeRule(db, { table: 'closure', id: idParam(params.closureId, 'Closure'), parcelId, ownerId: actor.id }))) throw notFound('Closure');
  return json({ removed: true });
});
