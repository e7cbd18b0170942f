import { db } from '../../../../../db';
import { validateZoneForSave } from '../../../../../db/boundaries.queries';
import { addZone } from '../../../../../db/parcel-rules.queries';
import { AppError, notFound } from '../../../../../lib/errors';
import { zoneSchema } from '../../../../../lib/land.schemas';
import { endpoint, geometryBodyBytes, json, readJson } from '../../../../../server/http';
import { ownedParcel } from '../../../../../server/parcel-access';

/** A no-harvest zone, which must lie wholly inside its parcel (PostGIS ST_CoveredBy decides). */
export const POST = endpoint(async ({ locals, params, request }) => {
  const { actor, parcelId } = await ownedParcel(locals, params);
  const zone = await readJson(request, zoneSchema, { maxBytes: geometryBodyBytes });
  const checked = await validateZoneForSave(db, zone.boundary, { parcelId });
  if (!checked.ok) {
    const [first] = checked.problems;
    throw new AppError(400, first?.code ?? 'invalid-boundary', first?.message ?? 'The zone is not valid.', 'boundary', { problems: checked.problems });
  }
  const row = await addZone(db, { parcelId, ownerId: actor.id, zone: { ...zone, boundary: checked.boundary } });
  if (!row) throw notFound('Parcel');
  return json({ zone: row }, 201);
});
