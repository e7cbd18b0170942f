import { seasonReportCsv, seasonReportFileName } from '../../../../../lib/season-report-csv';
import { csvContentType } from '../../../../../lib/csv';
import { endpoint } from '../../../../../server/http';
import { requestedSeasonReport } from '../../../../../server/season-report-request';

/** The season report as CSV (RFC 4180): one record per tally of each species taken, then one per breach. */
export const GET = endpoint(async ({ locals, params, url }) => {
  const { report } = await requestedSeasonReport(locals, params, url);
  const name = seasonReportFileName(report);
  return new Response(seasonReportCsv(report), { headers: { 'content-type': csvContentType, 'content-disposition': `attachment; filename="${name}"` } });
});
