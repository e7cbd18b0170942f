import { loadCurrentTerms, loadUsableParcelFacts, loadUsage } from '../../db/field.queries';
import type { Executor } from '../../db/client';
import { localDateAt, usageWindows } from '../../lib/field';
import { packMaxParcels, type FieldPack } from '../../lib/field/pack';
import type { Forager } from '../../lib/field/types';

/**
 * The field pack for a forager at an instant: every parcel they may use with what the engine needs,
 * what they (and everyone, for the parcel's and club's seasons) had taken as of now, and the terms.
 * The phone decides check-ins from it when there is no signal (src/lib/field/pack.ts).
 */
export async function fieldPack(db: Executor, { forager, now = new Date() }: { forager: Forager; now?: Date }): Promise<FieldPack> {
  const { parcels, usable } = await loadUsableParcelFacts(db, { forager, limit: packMaxParcels });
  const usageDay = Object.fromEntries(parcels.map((p) => [p.id, localDateAt(now, p.timeZone)]));
  const windows = parcels.flatMap((p) => usageWindows(p, usageDay[p.id] as string, 'open'));
  const [{ usage }, terms] = await Promise.all([loadUsage(db, { forager, windows }), loadCurrentTerms(db, { parcelIds: parcels.map((p) => p.id) })]);
  return {
    format: 1,
    asOf: now.toISOString(),
    forager,
    parcels,
    usable,
    usage: Object.fromEntries(parcels.map((p) => [p.id, usage.get(p.id) ?? {}])),
    usageDay,
    terms: Object.fromEntries(parcels.map((p) => [p.id, terms.get(p.id) ?? null])),
  };
}
