import { db } from '../db';
import { saveAllowance, type AllowanceTarget } from '../db/parcel-rules.queries';
import { findSpecies } from '../db/species.queries';
import { invalidInput, notFound } from '../lib/errors';
import { allowanceSchema } from '../lib/land.schemas';
import { readJson } from './http';
import { ownedParcel } from './parcel-access';

/** Reads an allowance and saves it as `target` allows; shared by POST and PUT here and PUT on one allowance. */
export async function saveAllowanceRequest(locals: App.Locals, params: Record<string, string | undefined>, request: Request, target: AllowanceTarget) {
  const { actor, parcelId } = await ownedParcel(locals, params);
  const allowance = await readJson(request, allowanceSchema);
  if (!(await findSpecies(db, { speciesId: allowance.speciesId }))) throw invalidInput('speciesId', 'That species is not in the catalogue.');
  const row = await saveAllowance(db, { parcelId, ownerId: actor.id, allowance, now: new Date(), target });
  if (!row) throw notFound('Parcel');
  return row;
}

