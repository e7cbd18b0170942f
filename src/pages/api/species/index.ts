import { db } from '../../../db';
import { addSpecies } from '../../../db/catalogue.commands';
import { listSpecies } from '../../../db/species.queries';
import { speciesSchema } from '../../../lib/catalogue.schemas';
import { forbidden } from '../../../lib/errors';
import { endpoint, guard, json, readJson } from '../../../server/http';

/** The species catalogue with its cautions. */
export const GET = endpoint(async ({ locals }) => {
  guard(locals.actor, 'catalogue:read');
  return json({ species: await listSpecies(db) });
});

/** An admin adds a species with its cautions, each with its source. */
export const POST = endpoint(async ({ locals, request }) => {
  const admin = guard(locals.actor, 'catalogue:edit');
  const input = await readJson(request, speciesSchema);
  const added = await addSpecies(db, { adminId: admin.id, input, now: new Date() });
  if (!added) throw forbidden();
  return json({ species: added }, 201);
});
