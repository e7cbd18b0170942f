import { loadParcelFactsAround, loadParcelFactsNear, loadUsage } from '../../db/field.queries';
import { recordCheckIn } from '../../db/field.commands';
import type { Db, Executor } from '../../db/client';
import { usageWindows } from '../../lib/field/counting';
import { candidatesNear, decideCheckIn, localDateAt } from '../../lib/field';
import type { CheckInAnswer, Forager, LonLat } from '../../lib/field/types';

export type CheckInResult = CheckInAnswer & { visitId: string | null };

type Asked = { forager: Forager; position: LonLat; accuracyM: number; source?: 'gps' | 'tap'; now?: Date };

/**
 * The verdict at a position, as the engine gives it among the parcels near it (the GiST lookup)
 * with what the forager has taken on each. When it is outside them all, the parcels whose bounding
 * box holds the position are added, so standing in a cut-out is said so. These are the parcels
 * `candidatesNear` keeps from a field pack (src/lib/field/verdict.ts), so the phone decides alike.
 */
export async function decideAt(db: Executor, { forager, position, accuracyM, now = new Date() }: Asked): Promise<CheckInAnswer> {
  const near = { longitude: position[0], latitude: position[1], forager };
  const parcels = await loadParcelFactsNear(db, { ...near, radiusM: Math.max(accuracyM, 1) });
  // The visit total is the open visit's on that parcel today, if one is open: the one this check-in continues.
  const windows = parcels.flatMap((p) => usageWindows(p, localDateAt(now, p.timeZone), 'open'));
  const { usage } = await loadUsage(db, { forager, windows });
  const decide = (among: typeof parcels) => decideCheckIn({ position, accuracyM, at: now, forager, parcels: among, usage: (parcelId) => usage.get(parcelId) ?? {} });
  const answer = decide(parcels);
  if (answer.verdict !== 'outside') return answer;
  // The index's boxes are rounded outwards to single precision; the engine's test of the box decides.
  const around = candidatesNear(await loadParcelFactsAround(db, near), position, accuracyM).filter((p) => !parcels.some((q) => q.id === p.id));
  return around.length > 0 ? decide([...parcels, ...around]) : answer;
}

/**
 * "I am here". Decides (decideAt), then logs the check-in and, when harvest is allowed, continues
 * today's visit on that parcel or opens one.
 */
export async function checkIn(db: Db, asked: Asked): Promise<CheckInResult> {
  const now = asked.now ?? new Date();
  const answer = await decideAt(db, { ...asked, now });
  const clear = answer.verdict === 'clear' && answer.parcel !== null;
  const visitId = await recordCheckIn(db, {
    forager: asked.forager, position: asked.position, accuracyM: asked.accuracyM, source: asked.source ?? 'gps', now, verdict: answer.verdict, parcelId: answer.parcel?.id ?? null,
    visit: clear ? { localDate: answer.localDate, permitId: answer.permitId } : null,
  });
  return { ...answer, visitId };
}
