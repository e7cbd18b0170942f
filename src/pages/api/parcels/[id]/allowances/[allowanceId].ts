import { db } from '../../../../../db';
import { removeAllowance } from '../../../../../db/parcel-rules.queries';
import { notFound } from '../../../../../lib/errors';
import { endpoint, idParam, json } from '../../../../../server/http';
import { ownedParcel } from '../../../../../server/parcel-access';
import { saveAllowanceRequest } from '../../../../../server/allowance-requests';

/** Changes one allowance in place (seasons, methods, limits); its species stays. Holders whose limits got tighter are told. */
export const PUT = endpoint(async ({ locals, params, request, url }) => {
  const allowanceId = idParam(params.allowanceId, 'Allowance');
  return json({ allowance: await saveAllowanceRequest(locals, params, request, { kind: 'existing', allowanceId }, url.origin) });
});

export const DELETE = endpoint(async ({ locals, params }) => {
  const { actor, parcelId } = await ownedParcel(locals, params);
  if (!(await removeAllowance(db, { parcelId, ownerId: actor.id, allowanceId: idParam(params.allowanceId, 'Allowance'), now: new Date() }))) throw notFound('Allowance');
  return json({ removed: true });
});
