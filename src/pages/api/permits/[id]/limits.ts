import { db } from '../../../../db';
import { findPermitForOwner } from '../../../../db/permits.queries';
import { tightenPermit } from '../../../../db/permits.commands';
import { notFound } from '../../../../lib/errors';
import { permitLimitSchema } from '../../../../lib/permits.schemas';
import { endpoint, guard, idParam, json, readJson } from '../../../../server/http';

/** Sets one of the permit's own limits, which must be tighter than the parcel's (or a club-wide cap). */
export const POST = endpoint(async ({ locals, params, request }) => {
  const actor = guard(locals.actor, 'parcel:list-own');
  const permitId = idParam(params.id, 'Permit');
  if (!(await findPermitForOwner(db, { permitId, ownerId: actor.id }))) throw notFound('Permit');
  guard(actor, 'permit:grant', { ownerId: actor.id });
  const limit = await readJson(request, permitLimitSchema);
  await db.transaction((tx) => tightenPermit(tx, { permitId, ownerId: actor.id, limit }));
  return json({ limit }, 201);
});
