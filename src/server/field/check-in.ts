import { loadParcelFactsNear, loadUsage } from '../../db/field.queries';
import { recordCheckIn } from '../../db/field.commands';
import type { Db } from '../../db/client';
import { usageWindows } from '../../lib/field/counting';
import { decideCheckIn, localDateAt } from '../../lib/field';
import type { CheckInAnswer, Forager, LonLat } from '../../lib/field/types';

export type CheckInResult = CheckInAnswer & { visitId: string | null };

/**
 * "I am here". Loads the candidate parcels near the position (the GiST lookup) and what the forager
 * has taken on each, calls the engine once, then logs the check-in and, when harvest is allowed,
 * continues today's visit on that parcel or opens one.
 */
export async function checkIn(
  db: Db,
  { forager, position, accuracyM, source = 'gps', now = new Date() }: { forager: Forager; position: LonLat; accuracyM: number; source?: 'gps' | 'tap'; now?: Date },
): Promise<CheckInResult> {
  const parcels = await loadParcelFactsNear(db, { longitude: position[0], latitude: position[1], radiusM: Math.max(accuracyM, 1), forager });
  // The visit total is the open visit's on that parcel today, if one is open: the one this check-in continues.
  const windows = parcels.flatMap((p) => usageWindows(p, localDateAt(now, p.timeZone), 'open'));
  const { usage } = await loadUsage(db, { forager, windows });
  const answer = decideCheckIn({ position, accuracyM, at: now, forager, parcels, usage: (parcelId) => usage.get(parcelId) ?? {} });
  const clear = answer.verdict === 'clear' && answer.parcel !== null;
  const visitId = await recordCheckIn(db, {
    forager, position, accuracyM, source, now, verdict: answer.verdict, parcelId: answer.parcel?.id ?? null,
    visit: clear ? { localDate: answer.localDate, permitId: answer.permitId } : null,
  });
  return { ...answer, visitId };
}
