import { db } from '../../../../db';
import { listFlags } from '../../../../db/flags.queries';
import { stewardedClub } from '../../../../server/audit-access';
import { endpoint, json } from '../../../../server/http';

/** Breaches and nearing tallies under the club's permits, newest first, with their follow-up. */
export const GET = endpoint(async ({ locals, params }) => {
  const { clubId } = stewardedClub(locals, params);
  return json({ flags: await listFlags(db, { clubId }) });
});
