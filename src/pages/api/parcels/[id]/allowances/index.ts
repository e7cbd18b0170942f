import { db } from '../../../../../db';
import { saveAllowance } from '../../../../../db/parcel-rules.queries';
import { listPermitsBindingLimits } from '../../../../../db/permits.queries';
import { findSpecies } from '../../../../../db/species.queries';
import { invalidInput, notFound } from '../../../../../lib/errors';
import { allowanceSchema } from '../../../../../lib/land.schemas';
import { endpoint, json, readJson } from '../../../../../server/http';
import { noticeLimitsTightened } from '../../../../../server/notices';
import { ownedParcel } from '../../../../../server/parcel-access';

/** Sets the harvest terms of one species on the parcel: seasons, methods and limits. Holders whose limits got tighter are told. */
export const PUT = endpoint(async ({ locals, params, request, url }) => {
  const { actor, parcelId } = await ownedParcel(locals, params);
  const allowance = await readJson(request, allowanceSchema);
  if (!(await findSpecies(db, { speciesId: allowance.speciesId }))) throw invalidInput('speciesId', 'That species is not in the catalogue.');
  const before = await listPermitsBindingLimits(db, { parcelId, ownerId: actor.id });
  const row = await saveAllowance(db, { parcelId, ownerId: actor.id, allowance, now: new Date() });
  if (!row) throw notFound('Parcel');
  await noticeLimitsTightened({ before, after: await listPermitsBindingLimits(db, { parcelId, ownerId: actor.id }), origin: url.origin });
  return json({ allowance: row });
});
