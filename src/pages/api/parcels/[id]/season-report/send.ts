import { sendSeasonReportSchema } from '../../../../../lib/clubs.schemas';
import { sendSeasonReportMail } from '../../../../../server/club-notices';
import { endpoint, json, readJson } from '../../../../../server/http';
import { requestedSeasonReport } from '../../../../../server/season-report-request';

/** Sends the season report to the parcel's landowner now (the sender gets a copy). */
export const POST = endpoint(async ({ locals, params, request, url }) => {
  const input = await readJson(request, sendSeasonReportSchema);
  const query = new URL(url);
  if (input.asOf) query.searchParams.set('asOf', input.asOf);
  if (input.clubId) query.searchParams.set('club', input.clubId);
  const { actor, report } = await requestedSeasonReport(locals, params, query);
  const sentTo = await sendSeasonReportMail({ report, origin: url.origin, senderEmail: actor.email });
  return json({ sentTo, asOf: report.asOf });
});
