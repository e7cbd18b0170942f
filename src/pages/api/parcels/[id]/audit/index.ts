import { db } from '../../../../../db';
import { auditTallies } from '../../../../../db/audit.queries';
import { auditQuerySchema } from '../../../../../lib/clubs.schemas';
import { endpoint, json, parseInput } from '../../../../../server/http';
import { ownedParcel } from '../../../../../server/parcel-access';

/** The landowner's audit of one parcel: every holder's tallies against every limit. */
export const GET = endpoint(async ({ locals, params, url }) => {
  const { actor, parcelId } = await ownedParcel(locals, params, 'parcel:read');
  const { asOf } = parseInput(auditQuerySchema, Object.fromEntries(url.searchParams));
  return json(await auditTallies(db, { ownerId: actor.id, parcelId }, { asOf }));
});
