import { db } from '../../../../../db';
import { saveAllowance } from '../../../../../db/parcel-rules.queries';
import { findSpecies } from '../../../../../db/species.queries';
import { invalidInput, notFound } from '../../../../../lib/errors';
import { allowanceSchema } from '../../../../../lib/land.schemas';
import { endpoint, json, readJson } from '../../../../../server/http';
import { ownedParcel } from '../../../../../server/parcel-access';

/** Sets the harvest terms of one species on the parcel: seasons, methods and limits. */
export const PUT = endpoint(async ({ locals, params, request }) => {
  const { actor, parcelId } = await ownedParcel(locals, params);
  const allowance = await readJson(request, allowanceSchema);
  if (!(await findSpecies(db, { speciesId: allowance.speciesId }))) throw invalidInput('speciesId', 'That species is not in the catalogue.');
  const row = await saveAllowance(db, { parcelId, ownerId: actor.id, allowance, now: new Date() });
  if (!row) throw notFound('Parcel');
  return json({ allowance: row });
});
