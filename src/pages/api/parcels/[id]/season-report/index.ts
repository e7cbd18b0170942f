import { endpoint, json } from '../../../../../server/http';
import { requestedSeasonReport } from '../../../../../server/season-report-request';

/** The season report of the parcel as JSON. */
export const GET = endpoint(async ({ locals, params, url }) => json((await requestedSeasonReport(locals, params, url)).report));
