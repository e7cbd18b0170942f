import { loadMeasuredParcelsNear, loadParcelFactsAround, loadUsage } from '../../db/field.queries';
import { recordCheckIn } from '../../db/field.commands';
import type { Db, Executor } from '../../db/client';
import { usageWindows } from '../../lib/field/counting';
import { candidatesNear, decideCheckIn, localDateAt } from '../../lib/field';
import { placeMeasured } from '../../lib/field/geometry';
import type { CheckInAnswer, Forager, LonLat, MeasuredParcelFacts, ParcelFacts } from '../../lib/field/types';

export type CheckInResult = CheckInAnswer & { visitId: string | null };

type Asked = { forager: Forager; position: LonLat; accuracyM: number; source?: 'gps' | 'tap'; now?: Date };

/**
 * The verdict at a position, as the engine gives it among the parcels near it (the GiST lookup)
 * with what the forager has taken on each. PostGIS measures the position against each candidate
 * (covered, distance to the edge) in the same statement, so the engine reads those facts instead of
 * walking the boundaries. When the position is outside them all, the parcels whose bounding box
 * holds it are added, so standing in a cut-out is said so. These are the parcels `candidatesNear`
 * keeps from a field pack (src/lib/field/verdict.ts), so the phone decides alike.
 */
export async function decideAt(db: Executor, { forager, position, accuracyM, now = new Date() }: Asked): Promise<CheckInAnswer> {
  const near = { longitude: position[0], latitude: position[1], forager };
  const measured = await loadMeasuredParcelsNear(db, { ...near, radiusM: Math.max(accuracyM, 1) });
  const placement = (p: MeasuredParcelFacts) => placeMeasured(p.at, accuracyM).placement;
  let parcels: (MeasuredParcelFacts | ParcelFacts)[] = measured;
  if (measured.every((p) => placement(p) === 'outside')) {
    // Outside them all: the engine reads the boundaries of those whose box holds the position (the
    // index's boxes are rounded outwards to single precision; the engine's test of the box decides).
    const around = candidatesNear(await loadParcelFactsAround(db, near), position, accuracyM);
    parcels = [...around, ...measured.filter((p) => !around.some((q) => q.id === p.id))];
  }
  // The engine reads what was taken only on the parcel it decides on, one the position is inside.
  // The visit total is the open visit's on that parcel today, if one is open: the one this check-in continues.
  const inside = measured.filter((p) => placement(p) === 'inside');
  const windows = inside.flatMap((p) => usageWindows(p, localDateAt(now, p.timeZone), 'open'));
  const { usage } = await loadUsage(db, { forager, windows });
  return decideCheckIn({ position, accuracyM, at: now, forager, parcels, usage: (parcelId) => usage.get(parcelId) ?? {} });
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
