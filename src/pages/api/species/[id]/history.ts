import { db } from '../../../../db';
import { speciesHistory } from '../../../../db/catalogue.commands';
import { findSpecies } from '../../../../db/species.queries';
import { notFound } from '../../../../lib/errors';
import { endpoint, guard, idParam, json } from '../../../../server/http';

/** Who changed a species, when, and what changed, newest first (admin). */
export const GET = endpoint(async ({ locals, params }) => {
  const admin = guard(locals.actor, 'catalogue:edit');
  const speciesId = idParam(params.id, 'Species');
  if (!(await findSpecies(db, { speciesId }))) throw notFound('Species');
  const history = await speciesHistory(db, { adminId: admin.id, speciesIds: [speciesId] });
  if (!history) throw notFound('Species');
  return json({ history });
});
