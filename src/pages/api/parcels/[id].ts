import { db } from '../../../db';
import { findParcelForOwner, updateParcel } from '../../../db/parcels.queries';
import { notFound } from '../../../lib/errors';
import { parcelUpdateSchema } from '../../../lib/land.schemas';
import { acceptBoundary } from '../../../server/boundaries';
import { endpoint, geometryBodyBytes, guard, idParam, json, readJson } from '../../../server/http';

/** One of the landowner's parcels; another owner's parcel is answered as not found. */
export const GET = endpoint(async ({ locals, params }) => {
  const actor = guard(locals.actor, 'parcel:list-own');
  const parcel = await findParcelForOwner(db, { parcelId: idParam(params.id, 'Parcel'), ownerId: actor.id });
  if (!parcel) throw notFound('Parcel');
  guard(actor, 'parcel:read', { ownerId: parcel.ownerId });
  return json({ parcel });
});

/** Changes the parcel's settings or boundary (a new boundary is checked like a new parcel's). */
export const PATCH = endpoint(async ({ locals, params, request }) => {
  const actor = guard(locals.actor, 'parcel:list-own');
  const parcelId = idParam(params.id, 'Parcel');
  const existing = await findParcelForOwner(db, { parcelId, ownerId: actor.id });
  if (!existing) throw notFound('Parcel');
  guard(actor, 'parcel:edit', { ownerId: existing.ownerId });
  const patch = await readJson(request, parcelUpdateSchema, { maxBytes: geometryBodyBytes });
  if (patch.status === 'listed') guard(actor, 'parcel:list-publicly', { ownerId: existing.ownerId });
  const checked = patch.boundary ? await acceptBoundary(patch.boundary, { ownerId: actor.id, excludeParcelId: parcelId }) : null;
  const parcel = await updateParcel(db, { parcelId, ownerId: actor.id, listed: actor.landownerVerified, patch: { ...patch, ...(checked ? { boundary: checked.boundary } : {}) } });
  const warnings = checked?.warnings ?? [];
  if (!parcel) throw notFound('Parcel');
  return json({ parcel, warnings });
});
