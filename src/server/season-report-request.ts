import { db } from '../db';
import { seasonReport } from '../db/reports.queries';
import { seasonReportQuerySchema } from '../lib/clubs.schemas';
import { notFound, signedOut } from '../lib/errors';
import { parcelReportScope } from './audit-access';
import { idParam, parseInput } from './http';

/**
 * The season report a request asks for: `/…/[id]?asOf=YYYY-MM-DD&club=<club id>`. The landowner
 * gets everyone's (or one club's), a steward their club's; anyone else 404. `asOf` defaults to
 * today on the parcel's own calendar, as every audit's does.
 */
export async function requestedSeasonReport(locals: App.Locals, params: Record<string, string | undefined>, url: URL) {
  const actor = locals.actor;
  if (!actor) throw signedOut();
  const parcelId = idParam(params.id ?? params.parcelId, 'Parcel');
  const q = parseInput(seasonReportQuerySchema, Object.fromEntries(url.searchParams));
  const scope = await parcelReportScope(actor, { parcelId, clubId: q.club || null });
  const report = await seasonReport(db, scope, { asOf: q.asOf });
  if (!report) throw notFound('Parcel');
  return { actor, report };
}
