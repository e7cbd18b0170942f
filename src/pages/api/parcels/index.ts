import { db } from '../../../db';
import { createParcel, listParcelsForOwner } from '../../../db/parcels.queries';
import { AppError } from '../../../lib/errors';
import { newParcelSchema } from '../../../lib/land.schemas';
import { listingRefusal } from '../../../lib/listing';
import { acceptBoundary } from '../../../server/boundaries';
import { endpoint, geometryBodyBytes, guard, json, readJson } from '../../../server/http';

/** The signed-in landowner's parcels. */
export const GET = endpoint(async ({ locals }) => {
  const actor = guard(locals.actor, 'parcel:list-own');
  return json({ parcels: await listParcelsForOwner(db, { ownerId: actor.id }) });
});

/** A new parcel: listed at once for a verified landowner, a draft otherwise. Overlaps are warnings. */
export const POST = endpoint(async ({ locals, request }) => {
  const actor = guard(locals.actor, 'parcel:draft');
  const input = await readJson(request, newParcelSchema, { maxBytes: geometryBodyBytes });
  // A new parcel has no allowance and no terms yet, so it cannot be open to requests.
  if (input.openToRequests) throw new AppError(409, 'not-ready-for-requests', listingRefusal({ allowances: 0, hasTerms: false }) ?? '', 'openToRequests');
  const { warnings, boundary } = await acceptBoundary(input.boundary, { ownerId: actor.id });
  const parcel = await createParcel(db, { ownerId: actor.id, listed: actor.landownerVerified, input: { ...input, boundary } });
  return json({ parcel, warnings }, 201);
});
