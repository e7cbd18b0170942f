import { db } from '../../db';
import { listSpecies } from '../../db/species.queries';
import { endpoint, guard, json } from '../../server/http';

/** The species catalogue with its cautions. */
export const GET = endpoint(async ({ locals }) => {
  guard(locals.actor, 'catalogue:read');
  return json({ species: await listSpecies(db) });
});
