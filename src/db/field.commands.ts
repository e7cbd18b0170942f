import { and, desc, eq, isNull, sql } from 'drizzle-orm';
import { currentSeason, decideCheckIn, projectEntry, talliesFor } from '../lib/field';
import type { CheckInAnswer, Forager, LimitScope, LonLat, ParcelFacts, Tally, TallyState, Usage } from '../lib/field/types';
import { AppError, invalidInput, notFound } from '../lib/errors';
import { localDate } from '../lib/local-time';
import { toBaseScaled, toScaled, units } from '../lib/units';
import type { HarvestInput } from '../lib/field.schemas';
import { executePrepared, type Db, type Executor, type Tx } from './client';
import { loadParcelFactsNear, usageOnParcel } from './field.queries';
import { allowances, checkIns, flags, harvestEntries, visits } from './schema';

/**
 * Visits left open close themselves at the end of their parcel-local day (DST-correct in SQL).
 * Open visits are few and indexed; each looks up its parcel's zone by key, never a join over parcels.
 */
export async function closeStaleVisits(db: Executor, { now, foragerId }: { now: Date; foragerId?: string }) {
  const instant = now.toISOString();
  await db.execute(sql`
    update visits v set ended_at = stale.ends, ended_by = 'end-of-day'
    from (
      select o.id, ((o.local_date + 1)::timestamp at time zone (select p.time_zone from parcels p where p.id = o.parcel_id)) as ends
      from visits o where o.ended_at is null ${foragerId ? sql`and o.forager_id = ${foragerId}` : sql``}
    ) stale
    where v.id = stale.id and stale.ends <= ${instant}::timestamptz`);
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
      const measured = a.limits[0];
      return { speciesId: a.speciesId, seasonStart: season?.start ?? null, seasonEnd: season?.end ?? null, dimension: measured ? units[measured.unit].dimension : null };
    }),
  });
}

type Situation = { forager: Forager; position: LonLat; accuracyM: number; now: Date };

/** The verdict from the candidate parcels (found through the GiST index), before any tallies. */
async function locate(db: Executor, s: Situation) {
  const parcels = await loadParcelFactsNear(db, { longitude: s.position[0], latitude: s.position[1], radiusM: Math.max(s.accuracyM, 1), forager: s.forager });
  const answer = decideCheckIn({ position: s.position, accuracyM: s.accuracyM, at: s.now, forager: s.forager, parcels, usage: () => ({}) });
  return { answer, parcel: parcels.find((p) => p.id === answer.parcel?.id) ?? null };
}

/** The same verdict with the parcel's running totals for this forager and visit. */
async function withTallies(db: Executor, s: Situation, parcel: ParcelFacts, first: CheckInAnswer, visitId: string | null) {
  const usage = await usageFor(db, parcel, first, { foragerId: s.forager.id, visitId });
  return { answer: decideCheckIn({ position: s.position, accuracyM: s.accuracyM, at: s.now, forager: s.forager, parcels: [parcel], usage: () => usage }), usage };
}

async function decide(db: Executor, s: Situation & { visitId: string | null }) {
  const { answer, parcel } = await locate(db, s);
  if (answer.verdict !== 'clear' || !parcel) return { answer, parcel, usage: null };
  return { ...(await withTallies(db, s, parcel, answer, s.visitId)), parcel };
}

/**
 * The visit bookkeeping and the check-in log of one check-in, as one statement, so one implicit
 * transaction and one round trip. Visits past their local day end then; one person being on one
 * parcel at a time, a clear check-in elsewhere ends any other open visit; today's open visit here
 * continues, or one opens; and the check-in is logged. The visits it ends and the one it may
 * continue are disjoint (another parcel or an earlier day vs. today here), so the statement's
 * single snapshot is enough. Its generic plan is checked in tests/integration/check-in-plans.test.ts.
 */
export function checkInRecordQuery({ forager, position, accuracyM, instant, clearId, first }: { forager: Forager; position: LonLat; accuracyM: number; instant: string; clearId: string | null; first: CheckInAnswer }) {
  return sql`
  with ended as (
    update visits v set
      ended_at = case when o.ends <= ${instant}::timestamptz then o.ends else ${instant}::timestamptz end,
      ended_by = case when o.ends <= ${instant}::timestamptz then 'end-of-day'::visit_end else 'check-out'::visit_end end
    from (select x.id, x.parcel_id, ((x.local_date + 1)::timestamp at time zone (select p.time_zone from parcels p where p.id = x.parcel_id)) as ends
          from visits x where x.ended_at is null and x.forager_id = ${forager.id}::text) o
    where v.id = o.id and (o.ends <= ${instant}::timestamptz or (${clearId}::uuid is not null and o.parcel_id <> ${clearId}::uuid))
    returning v.id),
  open as (
    select id from visits where forager_id = ${forager.id}::text and parcel_id = ${clearId}::uuid and ended_at is null and local_date = ${first.localDate}::date
    order by started_at desc limit 1),
  created as (
    insert into visits (forager_id, parcel_id, permit_id, local_date, started_at)
    select ${forager.id}::text, ${clearId}::uuid, ${first.permitId}::uuid, ${first.localDate}::date, ${instant}::timestamptz
    where ${clearId}::uuid is not null and not exists (select 1 from open)
    returning id),
  visit as (select id from open union all select id from created),
  log as (
    insert into check_ins (forager_id, position, accuracy_m, verdict, parcel_id, visit_id, at)
    values (${forager.id}::text, ST_SetSRID(ST_MakePoint(${position[0]}::float8, ${position[1]}::float8), 4326), ${accuracyM}::float8, ${first.verdict}::verdict,
      ${first.parcel?.id ?? null}::uuid, (select id from visit limit 1), ${instant}::timestamptz)
    returning visit_id)
  select visit_id from log`;
}

/** "I am here": the verdict, and a visit opened (or continued) when harvest is allowed. */
export async function checkIn(db: Db, { forager, position, accuracyM, now }: { forager: Forager; position: LonLat; accuracyM: number; now: Date }) {
  const situation = { forager, position, accuracyM, now };
  const { answer: first, parcel } = await locate(db, situation);
  const clear = first.verdict === 'clear' && parcel ? parcel : null;
  const instant = now.toISOString();
  const clearId = clear?.id ?? null;
  const [row] = await executePrepared<{ visit_id: string | null }>(db, checkInRecordQuery({ forager, position, accuracyM, instant, clearId, first }));
  const visitId = row?.visit_id ?? null;
  const answer = clear ? (await withTallies(db, situation, clear, first, visitId)).answer : first;
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
    // Taking away (a negative correction) never breaches; adding, even as a correction, is checked.
    const reversing = input.quantity.startsWith('-');
    // A unit of another dimension throws UnitMismatch: a 400 naming the unit field.
    const tallyContext = { forager, permit, thresholdPercent: parcel.nearingThresholdPercent };
    const projection = projectEntry(allowance, usage, { quantity: input.quantity, unit: input.unit }, tallyContext);
    const breach = projection.wouldBreach && !reversing;
    if (preview) return { entry: null, replayed: false, projection };
    if (breach && !input.acknowledgeOver) {
      throw new AppError(409, 'would-go-over', 'This entry would take a limit over. Take less, or confirm that you are going over; the landowner is told.', 'quantity', { projection });
    }
    let photoDistanceM: number | null = null;
    if (input.photoUploadId) {
      const [photo] = await tx.execute<{ distance: number | null }>(sql`
        select ST_Distance(u.gps_position::geography, ST_SetSRID(ST_MakePoint(${checkInRow.position.coordinates[0]}, ${checkInRow.position.coordinates[1]}), 4326)::geography) as distance
        from uploads u where u.id = ${input.photoUploadId} and u.owner_id = ${forager.id} and u.purpose = 'harvest-photo'`);
      if (!photo) throw invalidInput('photoUploadId', 'That photo was not found among your uploads; upload it again.');
      photoDistanceM = photo.distance;
    }
    const baseQuantity = baseDecimal(input.quantity, input.unit);
    if (input.corrects) {
      // A correction belongs to the same forager, parcel and species, and cannot take away more
      // than the entry (with its earlier corrections) still counts.
      const [original] = await tx.execute<{ remaining: string }>(sql`
        select (o.base_quantity + coalesce((select sum(c.base_quantity) from harvest_entries c where c.corrects_entry_id = o.id), 0))::text as remaining
        from harvest_entries o
        where o.id = ${input.corrects.entryId} and o.forager_id = ${forager.id} and o.parcel_id = ${parcel.id} and o.species_id = ${input.speciesId}`);
      if (!original) throw notFound('The entry to correct (yours, on this parcel, for this species)');
      if (toScaled(original.remaining) + toScaled(baseQuantity) < 0n) {
        throw invalidInput('quantity', 'A correction cannot take away more than the entry still counts.');
      }
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
        baseQuantity,
        localDate: localDate(now, parcel.timeZone),
        position: { type: 'Point', coordinates: checkInRow.position.coordinates },
        photoUploadId: input.photoUploadId ?? null,
        photoDistanceM,
        breach,
        acknowledgedOver: Boolean(input.acknowledgeOver),
        correctsEntryId: input.corrects?.entryId ?? null,
        correctionReason: input.corrects?.reason ?? null,
        recordedBy: forager.id,
        recordedAt: now,
      })
      // The same key sent at the same moment for another species took another lock: the later
      // insert waits for the first, then finds the key taken, and answers with the first entry.
      .onConflictDoNothing({ target: harvestEntries.idempotencyKey })
      .returning();
    if (!entry) {
      const first = await findEntryByKey(tx, input.idempotencyKey);
      if (!first || first.foragerId !== forager.id) throw new AppError(409, 'key-in-use', 'That idempotency key belongs to another entry; send a new key.', 'idempotencyKey');
      return { entry: first, replayed: true, projection: null };
    }
    const flag = flagFor(talliesFor(allowance, usage, tallyContext), projection.tallies, breach);
    if (flag) {
      await tx.insert(flags).values({
        kind: flag.kind,
        entryId: entry.id,
        parcelId: parcel.id,
        speciesId: input.speciesId,
        foragerId: forager.id,
        permitId: permit?.id ?? null,
        scopes: flag.scopes,
        worstState: flag.worstState,
        tallies: projection.tallies.map((t) => ({ scope: t.scope, state: t.state, used: t.used, limit: t.limit.quantity, unit: t.limit.unit, percent: t.percent })),
        createdAt: now,
      });
    }
    return { entry, replayed: false, projection, parcelId: parcel.id, permit };
  });
}

const stateRank: Record<TallyState, number> = { within: 0, nearing: 1, reached: 2, over: 3 };

/**
 * Whether an entry raises a flag: a breach always does; otherwise an entry that moves a tally up
 * into nearing or reached. Entries that keep a tally where it already stood raise none, so a
 * steward sees each crossing once.
 */
export function flagFor(before: Tally[], after: Tally[], breach: boolean): { kind: 'breach' | 'nearing'; scopes: LimitScope[]; worstState: TallyState } | null {
  const raised = after.filter((t) => {
    const was = before.find((b) => b.scope === t.scope)?.state ?? 'within';
    return stateRank[t.state] > stateRank[was] && t.state !== 'within';
  });
  if (!breach && raised.length === 0) return null;
  const scopes = (breach ? after.filter((t) => t.state === 'over' || raised.includes(t)) : raised).map((t) => t.scope);
  const worstState = after.map((t) => t.state).reduce<TallyState>((worst, s) => (stateRank[s] > stateRank[worst] ? s : worst), 'within');
  return { kind: breach ? 'breach' : 'nearing', scopes, worstState };
}

/** A quantity in its dimension's base unit as a decimal string (exact: see src/lib/units.ts). */
function baseDecimal(quantity: string, unit: HarvestInput['unit']) {
  const scaled = toBaseScaled(quantity.replace(/^-/, ''), unit);
  const sign = quantity.startsWith('-') ? '-' : '';
  const whole = scaled / 10n ** 18n;
  const fraction = (scaled % 10n ** 18n).toString().padStart(18, '0').slice(0, 16);
  return `${sign}${whole}.${fraction}`;
}
