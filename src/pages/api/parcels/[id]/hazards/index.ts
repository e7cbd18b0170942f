import { db } from '../../../../../db';
import { addHazard } from '../../../../../db/parcel-rules.queries';
import { notFound } from '../../../../../lib/errors';
import { hazardSchema } from '../../../../../lib/land.schemas';
import { endpoint, json, readJson } from '../../../../../server/http';
import { ownedParcel } from '../../../../../server/parcel-access';

/** A warning shown at check-in (hunting, steep ground, ticks …). */
export const POST = endpoint(async ({ locals, params, request }) => {
  const { actor, parcelId } = await ownedParcel(locals, params);
  const hazard = await readJson(request, hazardSchema);
  const row = await addHazard(db, { parcelId, ownerId: actor.id, hazard });
  if (!row) throw notFound('Parcel');
  return json({ hazard: row }, 201);
});
