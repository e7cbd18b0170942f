import { db } from '../db';
import { saveAllowance, type AllowanceTarget } from '../db/parcel-rules.queries';
import { listPermitsBindingLimits } from '../db/permits.queries';
import { findSpecies } from '../db/species.queries';
import { invalidInput, notFound } from '../lib/errors';
import { allowanceSchema } from '../lib/land.schemas';
import { readJson } from './http';
import { noticeLimitsTightened } from './notices';
import { ownedParcel } from './parcel-access';

/**
 * Reads an allowance and saves it as `target` allows; shared by POST and PUT here and PUT on one
 * allowance. Holders whose limits got tighter are told.
 */
export async function saveAllowanceRequest(locals: App.Locals, params: Record<string, string | undefined>, request: Request, target: AllowanceTarget, origin: string) {
  const { actor, parcelId } = await ownedParcel(locals, params);
  const allowance = await readJson(request, allowanceSchema);
  if (!(await findSpecies(db, { speciesId: allowance.speciesId }))) throw invalidInput('speciesId', 'That species is not in the catalogue.');
  // The holders' e-mails are written with the allowance they tell of.
  const row = await db.transaction(async (tx) => {
    const before = await listPermitsBindingLimits(tx, { parcelId, ownerId: actor.id });
    const saved = await saveAllowance(tx, { parcelId, ownerId: actor.id, allowance, now: new Date(), target });
    if (saved) await noticeLimitsTightened(tx, { before, after: await listPermitsBindingLimits(tx, { parcelId, ownerId: actor.id }), origin });
    return saved;
  });
  if (!row) throw notFound('Parcel');
  return row;
}

