import { and, desc, eq, isNull, sql } from 'drizzle-orm';
import { currentSeason, decideCheckIn, projectEntry } from '../lib/field';
import type { CheckInAnswer, Forager, LonLat, ParcelFacts, Usage } from '../lib/field/types';
import { AppError, invalidInput, notFound } from '../lib/errors';
import { localDate } from '../lib/local-time';
import { toBaseScaled, units } from '../lib/units';
import type { HarvestInput } from '../lib/field.schemas';
import type { Db, Executor, Tx } from './client';
import { candidateParcelIds, loadParcelFacts, usageOnParcel } from './field.queries';
import { allowances, checkIns, harvestEntries, visits } from './schema';

/** Visits left open close themselves at the end of their parcel-local day (DST-correct in SQL). */
export async function closeStaleVisits(db: Executor, { now, foragerId }: { now: Date; foragerId?: string }) {
  const instant = now.toISOString();
  await db.execute(sql`
    update visits v set ended_at = ((v.local_date + 1)::timestamp at time zone p.time_zone), ended_by = 'end-of-day'
    from parcels p
    where p.id = v.parcel_id and v.ended_at is null
      and ((v.local_date + 1)::timestamp at time zone p.time_zone) <= ${instant}::timestamptz
      ${foragerId ? sql`and v.forager_id = ${foragerId}` : sql``}`);
}

async function usageFor(db: Executor, parcel: ParcelFacts, answer: CheckInAnswer, { foragerId, visitId }: { foragerId: string; visitId: string | null }): Promise<Usage> {
  const permit = parcel.permits.find((p) => p.id === answer.permitId);
  return usageOnParcel(db, {
    parcelId: parcel.id,
    foragerId,
    visitId,
    localDate: answer.localDate,
    clubPermitId: permit?.holderClubId ? permit.id : null,
    windows: parcel.allowances.map((a) => {
      const season = currentSeason(a.seasons, answer.localDate);
      return { speciesId: a.speciesId, seasonStart: season?.start ?? null, seasonEnd: season?.end ?? null };
    }),
  });
}

/** Runs the engine twice: once to find the parcel and verdict, then with that parcel's tallies. */
async function decide(db: Executor, { forager, position, accuracyM, now, visitId }: { forager: Forager; position: LonLat; accuracyM: number; now: Date; visitId: string | null }) {
  const ids = await candidateParcelIds(db, { longitude: position[0], latitude: position[1], radiusM: Math.max(accuracyM, 1) });
  const parcels = await loadParcelFacts(db, { parcelIds: ids, forager });
  const first = decideCheckIn({ position, accuracyM, at: now, forager, parcels, usage: () => ({}) });
  const parcel = parcels.find((p) => p.id === first.parcel?.id);
  if (first.verdict !== 'clear' || !parcel) return { answer: first, parcel: parcel ?? null };
  const usage = await usageFor(db, parcel, first, { foragerId: forager.id, visitId });
  return { answer: decideCheckIn({ position, accuracyM, at: now, forager, parcels: [parcel], usage: () => usage }), parcel, usage };
}

/** "I am here": the verdict, and a visit opened (or continued) when harvest is allowed. */
export async function checkIn(db: Db, { forager, position, accuracyM, now }: { forager: Forager; position: LonLat; accuracyM: number; now: Date }) {
  await closeStaleVisits(db, { now, foragerId: forager.id });
  const first = await decide(db, { forager, position, accuracyM, now, visitId: null });
  let visitId: string | null = null;
  if (first.answer.verdict === 'clear' && first.parcel) {
    const [open] = await db
      .select({ id: visits.id })
      .from(visits)
      .where(and(eq(visits.foragerId, forager.id), eq(visits.parcelId, first.parcel.id), isNull(visits.endedAt), eq(visits.localDate, first.answer.localDate)))
      .orderBy(desc(visits.startedAt))
      .limit(1);
    visitId = open?.id ?? null;
    if (!visitId) {
      const [created] = await db
        .insert(visits)
        .values({ foragerId: forager.id, parcelId: first.parcel.id, permitId: first.answer.permitId, localDate: first.answer.localDate, startedAt: now })
        .returning({ id: visits.id });
      visitId = created?.id ?? null;
    }
  }
  // A continued visit has its own tallies so far.
  const answer = visitId && first.parcel ? (await decide(db, { forager, position, accuracyM, now, visitId })).answer : first.answer;
  await db.transaction(async (tx) => {
    // The check-in log is a record, not the ledger: it may wait for the next disk flush.
    await tx.execute(sql`set local synchronous_commit = off`);
    await tx.insert(checkIns).values({ foragerId: forager.id, position: { type: 'Point', coordinates: position }, accuracyM, verdict: answer.verdict, parcelId: answer.parcel?.id ?? null, visitId, at: now });
  });
  return { ...answer, visitId };
}

export async function checkOut(db: Executor, { visitId, foragerId, now }: { visitId: string; foragerId: string; now: Date }) {
  const rows = await db
    .update(visits)
    .set({ endedAt: now, endedBy: 'check-out' })
    .where(and(eq(visits.id, visitId), eq(visits.foragerId, foragerId), isNull(visits.endedAt)))
    .returning({ id: visits.id });
  return rows.length > 0;
}

async function findEntryByKey(tx: Tx, key: string) {
  const [row] = await tx.select().from(harvestEntries).where(eq(harvestEntries.idempotencyKey, key));
  return row ?? null;
}

/**
 * Records one harvest entry. The allowance row of this parcel and species is locked first, so two
 * entries saved at the same moment are checked one after the other against the same totals;
 * an entry that would go over needs `acknowledgeOver` and is then flagged as a breach.
 */
export async function recordHarvest(db: Db, { forager, input, now, preview = false }: { forager: Forager; input: HarvestInput; now: Date; preview?: boolean }) {
  return db.transaction(async (tx) => {
    const [visit] = await tx.select().from(visits).where(and(eq(visits.id, input.visitId), eq(visits.foragerId, forager.id)));
    if (!visit) throw notFound('Visit');
    const [locked] = await tx
      .select({ id: allowances.id })
      .from(allowances)
      .where(and(eq(allowances.parcelId, visit.parcelId), eq(allowances.speciesId, input.speciesId)))
      .for('update');
    if (!locked) throw invalidInput('speciesId', 'That species is not allowed on this parcel; choose one from the list.');
    const replay = await findEntryByKey(tx, input.idempotencyKey);
    if (replay) {
      if (replay.foragerId !== forager.id) throw new AppError(409, 'key-in-use', 'That idempotency key belongs to another entry; send a new key.', 'idempotencyKey');
      return { entry: replay, replayed: true, projection: null };
    }
    if (visit.endedAt) throw new AppError(409, 'visit-closed', 'This visit has ended; check in again to record more.');
    const [checkInRow] = await tx
      .select({ position: sql<{ coordinates: LonLat }>`ST_AsGeoJSON(${checkIns.position})::json`, accuracyM: checkIns.accuracyM })
      .from(checkIns)
      .where(eq(checkIns.visitId, visit.id))
      .orderBy(desc(checkIns.at))
      .limit(1);
    if (!checkInRow) throw new AppError(409, 'no-check-in', 'Check in on the parcel before recording a harvest.');
    const { answer, parcel, usage } = await decide(tx, { forager, position: checkInRow.position.coordinates, accuracyM: checkInRow.accuracyM, now, visitId: visit.id });
    if (answer.verdict !== 'clear' || !parcel || parcel.id !== visit.parcelId || !usage) {
      throw new AppError(409, 'not-clear', answer.reasons.join(' ') || 'Harvest is not allowed here now.');
    }
    const allowance = parcel.allowances.find((a) => a.speciesId === input.speciesId);
    const species = answer.species.find((s) => s.speciesId === input.speciesId);
    if (!allowance || !species) throw invalidInput('speciesId', 'That species is not allowed on this parcel.');
    if (!species.inSeason) throw new AppError(409, 'out-of-season', `${allowance.commonName} is out of season here today.`, 'speciesId');
    if (!allowance.methods.includes(input.method)) {
      throw invalidInput('method', `${allowance.commonName} may be taken here only by: ${allowance.methods.join(', ')}.`);
    }
    const permit = parcel.permits.find((p) => p.id === answer.permitId) ?? null;
    const isCorrection = Boolean(input.corrects);
    // A unit of another dimension throws UnitMismatch: a 400 naming the unit field.
    const projection = projectEntry(allowance, usage, { quantity: input.quantity, unit: input.unit }, { forager, permit, thresholdPercent: parcel.nearingThresholdPercent });
    const breach = projection.wouldBreach && !isCorrection;
    if (preview) return { entry: null, replayed: false, projection };
    if (breach && !input.acknowledgeOver) {
      throw new AppError(409, 'would-go-over', 'This entry would take a limit over. Take less, or confirm that you are going over; the landowner is told.', 'quantity', { projection });
    }
    if (input.corrects) {
      const [original] = await tx.select({ id: harvestEntries.id }).from(harvestEntries).where(and(eq(harvestEntries.id, input.corrects.entryId), eq(harvestEntries.foragerId, forager.id)));
      if (!original) throw notFound('The entry to correct');
    }
    const [entry] = await tx
      .insert(harvestEntries)
      .values({
        idempotencyKey: input.idempotencyKey,
        foragerId: forager.id,
        parcelId: parcel.id,
        permitId: permit?.id ?? null,
        visitId: visit.id,
        speciesId: input.speciesId,
        method: input.method,
        quantity: input.quantity,
        unit: input.unit,
        dimension: units[input.unit].dimension,
        baseQuantity: baseDecimal(input.quantity, input.unit),
        localDate: localDate(now, parcel.timeZone),
        position: { type: 'Point', coordinates: checkInRow.position.coordinates },
        photoUploadId: input.photoUploadId ?? null,
        breach,
        acknowledgedOver: Boolean(input.acknowledgeOver),
        correctsEntryId: input.corrects?.entryId ?? null,
        correctionReason: input.corrects?.reason ?? null,
        recordedBy: forager.id,
        recordedAt: now,
      })
      .returning();
    if (!entry) throw new Error('the entry was not saved');
    return { entry, replayed: false, projection, parcelId: parcel.id, permit };
  });
}

/** A quantity in its dimension's base unit as a decimal string (exact: see src/lib/units.ts). */
function baseDecimal(quantity: string, unit: HarvestInput['unit']) {
  const scaled = toBaseScaled(quantity.replace(/^-/, ''), unit);
  const sign = quantity.startsWith('-') ? '-' : '';
  const whole = scaled / 10n ** 18n;
  const fraction = (scaled % 10n ** 18n).toString().padStart(18, '0').slice(0, 16);
  return `${sign}${whole}.${fraction}`;
}
