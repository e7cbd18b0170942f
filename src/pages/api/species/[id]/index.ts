import { db } from '../../../../db';
import { editSpecies } from '../../../../db/catalogue.commands';
import { speciesSchema } from '../../../../lib/catalogue.schemas';
import { notFound } from '../../../../lib/errors';
import { endpoint, guard, idParam, json, readJson } from '../../../../server/http';

/** An admin changes a species and its cautions; what changed goes into the species' history. */
export const PUT = endpoint(async ({ locals, params, request }) => {
  const admin = guard(locals.actor, 'catalogue:edit');
  const speciesId = idParam(params.id, 'Species');
  const input = await readJson(request, speciesSchema);
  const edited = await editSpecies(db, { speciesId, adminId: admin.id, input, now: new Date() });
  if (!edited) throw notFound('Species');
  return json({ species: edited });
});
