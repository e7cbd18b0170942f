import type { LedgerFilters } from '../../../db/ledger.queries';
import { ledgerFiltersSchema } from '../../../lib/ledger.schemas';
import { parseInput } from '../../../server/http';

/* The leading underscore keeps this file out of Astro's routes: it is shared by the two endpoints. */

export function readLedgerFilters(url: URL): LedgerFilters {
  const raw = Object.fromEntries([...url.searchParams].filter(([key, value]) => value !== '' && key in ledgerFiltersSchema.shape));
  return parseInput(ledgerFiltersSchema, raw);
}
