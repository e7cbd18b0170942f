import { db } from '../../../../../db';
import { auditEntries } from '../../../../../db/audit.queries';
import { auditEntriesQuerySchema } from '../../../../../lib/clubs.schemas';
import { notFound } from '../../../../../lib/errors';
import { endpoint, json, parseInput } from '../../../../../server/http';
import { ownedParcel } from '../../../../../server/parcel-access';

/** The entries behind one tally on the landowner's parcel, with where each was made. */
export const GET = endpoint(async ({ locals, params, url }) => {
  const { actor, parcelId } = await ownedParcel(locals, params, 'parcel:read');
  const q = parseInput(auditEntriesQuerySchema, Object.fromEntries(url.searchParams));
  if (q.parcelId !== parcelId) throw notFound('That tally on this parcel');
  const entries = await auditEntries(db, { ownerId: actor.id, parcelId }, { ...q, viewerId: actor.id });
  if (!entries) throw notFound('That species in this parcel audit');
  return json({ entries });
});
