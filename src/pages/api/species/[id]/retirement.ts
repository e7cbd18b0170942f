import { db } from '../../../../db';
import { setSpeciesRetired } from '../../../../db/catalogue.commands';
import { retirementSchema } from '../../../../lib/catalogue.schemas';
import { notFound } from '../../../../lib/errors';
import { endpoint, guard, idParam, json, readJson } from '../../../../server/http';

/**
 * An admin retires a species (it stays on the allowances and entries that name it, but no landowner
 * can add it to a new allowance) or brings it back.
 */
export const POST = endpoint(async ({ locals, params, request }) => {
  const admin = guard(locals.actor, 'catalogue:edit');
  const speciesId = idParam(params.id, 'Species');
  const { retired } = await readJson(request, retirementSchema);
  const result = await setSpeciesRetired(db, { speciesId, adminId: admin.id, retired, now: new Date() });
  if (!result) throw notFound('Species');
  return json({ species: result });
});
