import { db } from '../../../../../db';
import { auditTallies } from '../../../../../db/audit.queries';
import { auditQuerySchema } from '../../../../../lib/clubs.schemas';
import { stewardedClub } from '../../../../../server/audit-access';
import { endpoint, json, parseInput } from '../../../../../server/http';

/** The club's tallies by parcel × species × member against every limit, for the season on `asOf` (by default today, on each parcel's own calendar). */
export const GET = endpoint(async ({ locals, params, url }) => {
  const { clubId } = stewardedClub(locals, params);
  const { asOf } = parseInput(auditQuerySchema, Object.fromEntries(url.searchParams));
  return json(await auditTallies(db, { clubId }, { asOf }));
});
