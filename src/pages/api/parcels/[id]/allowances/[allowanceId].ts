import { db } from '../../../../../db';
import { removeAllowance } from '../../../../../db/parcel-rules.queries';
import { notFound } from '../../../../../lib/errors';
import { endpoint, idParam, json } from '../../../../../server/http';
import { ownedParcel } from '../../../../../server/parcel-access';
import { saveAllowanceRequest } from '../../../../../server/allowance-requests';

/** Changes one allowance in place (seasons, methods, limits); its species stays. */
export const PUT = endpoint(async ({ locals, params, request }) => {
  const allowanceId = idParam(params.allowanceId, 'Allowance');
  return json({ allowance: await saveAllowanceRequest(locals, params, request, { kind: 'existing', allowanceId }) });
});

export const DELETE = endpoint(async ({ locals, params }) => {
  const { actor, parcelId } = await ownedParcel(locals, params);
  if (!(await removeAllowance(db, { parcelId, ownerId: actor.id, allowanceId: idParam(params.allowanceId, 'Allowance'), now: new Date() }))) throw notFound('Allowance');
  return json({ removed: true });
});
