import { db } from '../../../../../db';
import { auditEntries } from '../../../../../db/audit.queries';
import { auditEntriesQuerySchema } from '../../../../../lib/clubs.schemas';
import { notFound } from '../../../../../lib/errors';
import { stewardedClub } from '../../../../../server/audit-access';
import { endpoint, json, parseInput } from '../../../../../server/http';

/** The entries behind one of the club's tallies; a steward never sees where they were made, and gets each photo's copy without metadata. */
export const GET = endpoint(async ({ locals, params, url }) => {
  const { actor, clubId } = stewardedClub(locals, params);
  const q = parseInput(auditEntriesQuerySchema, Object.fromEntries(url.searchParams));
  const entries = await auditEntries(db, { clubId }, { ...q, viewerId: actor.id });
  if (!entries) throw notFound('That parcel and species in the club audit');
  return json({ entries });
});
