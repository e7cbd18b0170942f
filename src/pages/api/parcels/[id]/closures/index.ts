import { db } from '../../../../../db';
import { addClosure } from '../../../../../db/parcel-rules.queries';
import { notFound } from '../../../../../lib/errors';
import { closureSchema } from '../../../../../lib/land.schemas';
import { endpoint, json, readJson } from '../../../../../server/http';
import { ownedParcel } from '../../../../../server/parcel-access';

/** A date range when the whole parcel is shut (hunting season, logging, fire), with the reason. */
export const POST = endpoint(async ({ locals, params, request }) => {
  const { actor, parcelId } = await ownedParcel(locals, params);
  const closure = await readJson(request, closureSchema);
  const row = await addClosure(db, { parcelId, ownerId: actor.id, closure });
  if (!row) throw notFound('Parcel');
  return json({ closure: row }, 201);
});
