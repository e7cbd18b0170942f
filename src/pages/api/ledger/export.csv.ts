import { db } from '../../../db';
import { listLedger } from '../../../db/ledger.queries';
import { csvContentType, ledgerCsv, ledgerCsvFilename } from '../../../lib/csv';
import { localDateAt } from '../../../lib/field';
import { endpoint, guard } from '../../../server/http';
import { readLedgerFilters } from './_filters';

/** The forager's own ledger as an RFC 4180 CSV download, with the same filters as GET /api/ledger. */
export const GET = endpoint(async ({ locals, url }) => {
  const actor = guard(locals.actor, 'ledger:read-own');
  const entries = await listLedger(db, { foragerId: actor.id, filters: readLedgerFilters(url) });
  return new Response(ledgerCsv(entries), {
    headers: {
      'content-type': csvContentType,
      // RFC 6266 §4: a plain ASCII filename needs no filename* parameter.
      // Dated on the clock of the newest entry's parcel (a forager's parcels share a zone in practice).
      'content-disposition': `attachment; filename="${ledgerCsvFilename(localDateAt(new Date(), entries[0]?.timeZone ?? 'UTC'))}"`,
      'cache-control': 'private, no-store',
    },
  });
});
