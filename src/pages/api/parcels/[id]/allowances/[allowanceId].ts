import { db } from '../../../../../db';
import { removeAllowance } from '../../../../../db/parcel-rules.queries';
import { notFound } from '../../../../../lib/errors';
import { endpoint, idParam, json } from '../../../../../server/http';
import { ownedParcel } from '../../../../../server/parcel-access';

export const DELETE = endpoint(async ({ locals, params }) => {
  const { actor, parcelId } = await ownedParcel(locals, params);
  if (!(await removeAllowance(db, { parcelId, ownerId: actor.id, allowanceId: idParam(params.allowanceId, 'Allowance'), now: new Date() }))) throw notFound('Allowance');
  return json({ removed: true });
});
