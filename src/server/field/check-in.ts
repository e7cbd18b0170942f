import { loadMeasuredParcelsNear, loadParcelFactsAround, loadUsage, usageOf, usageQuery } from '../../db/field.queries';
import { recordCheckIn } from '../../db/field.commands';
import type { Db, Executor } from '../../db/client';
import { usageWindows } from '../../lib/field/counting';
import { candidatesNear, decideCheckIn, localDateAt } from '../../lib/field';
import { placeMeasured } from '../../lib/field/geometry';
import type { CheckInAnswer, Forager, LonLat, MeasuredParcelFacts, ParcelFacts, Usage } from '../../lib/field/types';

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
  const parcels = await candidatesAt(db, { forager, position, accuracyM });
  // The engine reads what was taken only on the parcel it decides on, one the position is inside.
  // The visit total is the open visit's on that parcel today, if one is open: the one this check-in continues.
  const inside = parcels.filter((p) => 'at' in p && placeMeasured(p.at, accuracyM).placement === 'inside');
  const windows = inside.flatMap((p) => usageWindows(p, localDateAt(now, p.timeZone), 'open'));
  const { usage } = await loadUsage(db, { forager, windows });
  return decideCheckIn({ position, accuracyM, at: now, forager, parcels, usage: (parcelId) => usage.get(parcelId) ?? {} });
}

/** The parcels a check-in is decided among: near the position (measured there), and when it is outside them all, those whose box holds it. */
async function candidatesAt(db: Executor, { forager, position, accuracyM }: Omit<Asked, 'now' | 'source'>): Promise<(MeasuredParcelFacts | ParcelFacts)[]> {
  const near = { longitude: position[0], latitude: position[1], forager };
  const measured = await loadMeasuredParcelsNear(db, { ...near, radiusM: Math.max(accuracyM, 1) });
  if (!measured.every((p) => placeMeasured(p.at, accuracyM).placement === 'outside')) return measured;
  // Outside them all: the engine reads the boundaries of those whose box holds the position (the
  // index's boxes are rounded outwards to single precision; the engine's test of the box decides).
  const around = candidatesNear(await loadParcelFactsAround(db, near), position, accuracyM);
  return [...around, ...measured.filter((p) => !around.some((q) => q.id === p.id))];
}

/**
 * "I am here". Decides as decideAt does, then logs the check-in and, when harvest is allowed,
 * continues today's visit on that parcel or opens one. The verdict does not depend on what was
 * taken (only the species' tallies do), so the engine decides first with nothing taken; for a clear
 * verdict, what was taken on that parcel is read in the same round trip that logs the check-in
 * (before it), and the engine answers again with it.
 */
export async function checkIn(db: Db, asked: Asked): Promise<CheckInResult> {
  const now = asked.now ?? new Date();
  const { forager, position, accuracyM } = asked;
  const parcels = await candidatesAt(db, { forager, position, accuracyM });
  let decidedOn: string | null = null;
  const decide = (usage: (parcelId: string) => Usage) => decideCheckIn({ position, accuracyM, at: now, forager, parcels, usage });
  const first = decide((parcelId) => {
    decidedOn = parcelId;
    return {};
  });
  const clear = first.verdict === 'clear' && first.parcel !== null;
  const parcel = clear ? parcels.find((p) => p.id === decidedOn) : undefined;
  const windows = parcel ? usageWindows(parcel, first.localDate, 'open') : [];
  const { visitId, firstRows } = await recordCheckIn(
    db,
    {
      forager, position, accuracyM, source: asked.source ?? 'gps', now, verdict: first.verdict, parcelId: first.parcel?.id ?? null,
      visit: clear ? { localDate: first.localDate, permitId: first.permitId } : null,
    },
    { first: windows.length > 0 ? usageQuery({ forager, windows }) : undefined },
  );
  if (windows.length === 0) return { ...first, visitId };
  const { usage } = usageOf(firstRows);
  return { ...decide((parcelId) => usage.get(parcelId) ?? {}), visitId };
}
