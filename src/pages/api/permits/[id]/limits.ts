import { db } from '../../../../db';
import { findPermitForOwner, listPermitsBindingLimits } from '../../../../db/permits.queries';
import { tightenPermit } from '../../../../db/permits.commands';
import { notFound } from '../../../../lib/errors';
import { permitLimitSchema } from '../../../../lib/permits.schemas';
import { endpoint, guard, idParam, json, readJson } from '../../../../server/http';
import { noticeLimitsTightened } from '../../../../server/notices';

/**
 * Sets one of the permit's own limits, which must be tighter than the parcel's (or a club-wide cap);
 * the holder is told of a limit that got tighter.
 */
export const POST = endpoint(async ({ locals, params, request, url }) => {
  const actor = guard(locals.actor, 'parcel:list-own');
  const permitId = idParam(params.id, 'Permit');
  const permit = await findPermitForOwner(db, { permitId, ownerId: actor.id });
  if (!permit) throw notFound('Permit');
  guard(actor, 'permit:grant', { ownerId: actor.id });
  const limit = await readJson(request, permitLimitSchema);
  const scope = { parcelId: permit.parcelId, ownerId: actor.id, permitId };
  // The holders' e-mails are written with the change they tell of.
  await db.transaction(async (tx) => {
    const before = await listPermitsBindingLimits(tx, scope);
    await tightenPermit(tx, { permitId, ownerId: actor.id, limit });
    await noticeLimitsTightened(tx, { before, after: await listPermitsBindingLimits(tx, scope), origin: url.origin });
  });
  return json({ limit }, 201);
});
