import { sendSeasonReportSchema } from '../../../../../lib/clubs.schemas';
import { sendSeasonReportMail } from '../../../../../server/club-notices';
import { endpoint, json, readJson } from '../../../../../server/http';
import { requestedSeasonReport } from '../../../../../server/season-report-request';
import { spend } from '../../../../../server/rate-limits';

/** Sends the season report to the parcel's landowner now (the sender gets a copy). */
export const POST = endpoint(async ({ locals, params, request, url }) => {
  const input = await readJson(request, sendSeasonReportSchema);
  const query = new URL(url);
  if (input.asOf) query.searchParams.set('asOf', input.asOf);
  if (input.clubId) query.searchParams.set('club', input.clubId);
  const { actor, report } = await requestedSeasonReport(locals, params, query);
  // Once a minute for the same report: a double click or a retry does not mail the landowner twice.
  await spend('seasonReportSend', [actor.id, params.id, input.clubId ?? 'all', report.asOf].join('|'));
  const sentTo = await sendSeasonReportMail({ report, origin: url.origin, senderEmail: actor.email });
  return json({ sentTo, asOf: report.asOf });
});
