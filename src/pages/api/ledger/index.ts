import { db } from '../../../db';
import { ledgerTotals, listLedger } from '../../../db/ledger.queries';
import { endpoint, guard, json } from '../../../server/http';
import { readLedgerFilters } from './_filters';

/**
 * The signed-in forager's own ledger: entries (filtered by parcelId, speciesId, from, to, seasonYear)
 * and their totals per parcel, species and season (always the whole ledger).
 */
export const GET = endpoint(async ({ locals, url }) => {
  const actor = guard(locals.actor, 'ledger:read-own');
  const filters = readLedgerFilters(url);
  const [entries, totals] = await Promise.all([listLedger(db, { foragerId: actor.id, filters }), ledgerTotals(db, { foragerId: actor.id })]);
  return json({ entries, totals }, 200, { 'cache-control': 'private, no-store' });
});
