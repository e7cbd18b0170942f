import { and, desc, eq, isNull, sql } from 'drizzle-orm';
import type { CountingFacts, FlagDecision } from '../lib/field/counting';
import type { Forager, LonLat, Method, Tally, Verdict } from '../lib/field/types';
import type { Measure, Unit } from '../lib/units';
import type { Db, Executor, Tx } from './client';
import { allowances, checkIns, flags, harvestEntries, harvestQuantities, visits, type Flag } from './schema';

/**
 * Writes of the field: visits and check-ins, ledger entries with their quantities, and flags.
 * The use cases in src/server/field/ decide; these only read and write rows.
 */

/** The instant a visit's local day ends, in SQL: the next local midnight in its parcel's zone (DST-correct). */
export const visitEnds = sql`((v.local_date + 1)::timestamp at time zone (select p.time_zone from parcels p where p.id = v.parcel_id))`;

/** Visits left open close themselves at the end of their parcel-local day. Open visits are few and indexed. */
export async function closeStaleVisits(db: Executor, { now, foragerId }: { now: Date; foragerId?: string }) {
  const instant = now.toISOString();
  await db.execute(sql`
    update visits v set ended_at = ${visitEnds}, ended_by = 'end-of-day'
    where v.ended_at is null ${foragerId ? sql`and v.forager_id = ${foragerId}` : sql``} and ${visitEnds} <= ${instant}::timestamptz`);
}

type CheckInRecord = {
  forager: Forager;
  position: LonLat;
  accuracyM: number;
  /** Where the position came from: the device's fix or a tap on the map. */
  source?: 'gps' | 'tap';
  now: Date;
  verdict: Verdict;
  parcelId: string | null;
  /** Set for a clear verdict: the visit to continue or open, on this parcel-local day under this permit. */
  visit: { localDate: string; permitId: string | null } | null;
};

/**
 * Logs a check-in and, for a clear verdict, continues today's open visit on the parcel or opens
 * one. A forager is on one parcel at a time: any other open visit ends (at its local midnight if
 * that has passed). Check-ins of one forager take turns (a transaction lock on the forager), and a
 * unique index allows one open visit, so simultaneous check-ins leave exactly one. Returns the visit.
 */
export async function recordCheckIn(db: Db, r: CheckInRecord): Promise<string | null> {
  const instant = r.now.toISOString();
  const logged = (tx: Executor, visitId: string | null) =>
    tx.insert(checkIns).values({
      foragerId: r.forager.id,
      position: { type: 'Point', coordinates: r.position },
      accuracyM: r.accuracyM,
      verdict: r.verdict,
      parcelId: r.parcelId,
      visitId,
      at: r.now,
      receivedAt: r.now,
      positionSource: r.source ?? 'gps',
    });
  const { visit, parcelId } = r;
  if (!visit || !parcelId) {
    await logged(db, null);
    return null;
  }
  return db.transaction(async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(hashtextextended(${`visits:${r.forager.id}`}, 0))`);
    await tx.execute(sql`
      update visits v set
        ended_at = least(${visitEnds}, ${instant}::timestamptz),
        ended_by = case when ${visitEnds} <= ${instant}::timestamptz then 'end-of-day'::visit_end else 'check-out'::visit_end end
      where v.forager_id = ${r.forager.id} and v.ended_at is null
        and (${visitEnds} <= ${instant}::timestamptz or v.parcel_id <> ${parcelId}::uuid or v.local_date <> ${visit.localDate}::date)`);
    const [open] = await tx.select({ id: visits.id }).from(visits).where(and(eq(visits.foragerId, r.forager.id), isNull(visits.endedAt)));
    const visitId =
      open?.id ??
      (await tx.insert(visits).values({ foragerId: r.forager.id, parcelId, permitId: visit.permitId, localDate: visit.localDate, startedAt: r.now }).returning({ id: visits.id }))[0]?.id ??
      null;
    await logged(tx, visitId);
    return visitId;
  });
}

export async function checkOut(db: Executor, { visitId, foragerId, now }: { visitId: string; foragerId: string; now: Date }) {
  const rows = await db
    .update(visits)
    .set({ endedAt: now, endedBy: 'check-out' })
    .where(and(eq(visits.id, visitId), eq(visits.foragerId, foragerId), isNull(visits.endedAt)))
    .returning({ id: visits.id });
  return rows.length > 0;
}

/** A forager's own visit, with where they checked in last in it. */
export async function findVisit(db: Executor, { visitId, foragerId }: { visitId: string; foragerId: string }) {
  const [visit] = await db.select().from(visits).where(and(eq(visits.id, visitId), eq(visits.foragerId, foragerId)));
  if (!visit) return null;
  const [at] = await db
    .select({ position: sql<{ coordinates: LonLat }>`ST_AsGeoJSON(${checkIns.position})::json`, accuracyM: checkIns.accuracyM })
    .from(checkIns)
    .where(eq(checkIns.visitId, visit.id))
    .orderBy(desc(checkIns.at))
    .limit(1);
  return { ...visit, checkIn: at ? { position: at.position.coordinates, accuracyM: at.accuracyM } : null };
}

/**
 * Takes the row lock that makes recording on one parcel and species take turns: two entries saved
 * at the same moment are checked one after the other against the same totals. False when the
 * species has no allowance (in force or removed) on the parcel.
 */
export async function lockAllowance(tx: Tx, { parcelId, speciesId }: { parcelId: string; speciesId: string }): Promise<boolean> {
  const [locked] = await tx
    .select({ id: allowances.id })
    .from(allowances)
    .where(and(eq(allowances.parcelId, parcelId), eq(allowances.speciesId, speciesId)))
    .for('update');
  return Boolean(locked);
}

export type StoredEntry = typeof harvestEntries.$inferSelect & { quantities: { measure: Measure; quantity: string; unit: Unit; baseQuantity: string }[] };

async function withQuantities(db: Executor, entry: typeof harvestEntries.$inferSelect): Promise<StoredEntry> {
  const quantities = await db
    .select({ measure: harvestQuantities.measure, quantity: sql<string>`trim_scale(${harvestQuantities.quantity})::text`, unit: harvestQuantities.unit, baseQuantity: sql<string>`trim_scale(${harvestQuantities.baseQuantity})::text` })
    .from(harvestQuantities)
    .where(eq(harvestQuantities.entryId, entry.id))
    .orderBy(harvestQuantities.measure);
  return { ...entry, quantities };
}

/** The entry the forager first sent a key with, if any. Keys are the forager's own: another's same key is another entry. */
export async function findEntryByKey(db: Executor, { foragerId, key }: { foragerId: string; key: string }): Promise<StoredEntry | null> {
  const [row] = await db.select().from(harvestEntries).where(and(eq(harvestEntries.foragerId, foragerId), eq(harvestEntries.idempotencyKey, key)));
  return row ? withQuantities(db, row) : null;
}

/** A forager's own entry by id. */
export async function findOwnEntry(db: Executor, { entryId, foragerId }: { entryId: string; foragerId: string }): Promise<StoredEntry | null> {
  const [row] = await db.select().from(harvestEntries).where(and(eq(harvestEntries.id, entryId), eq(harvestEntries.foragerId, foragerId)));
  return row ? withQuantities(db, row) : null;
}

/** What a correction chain still counts, per measure in base units: its root and every correction of it. */
export async function chainRemaining(db: Executor, { rootId }: { rootId: string }): Promise<Partial<Record<Measure, string>>> {
  const rows = await db.execute<{ measure: Measure; remaining: string }>(sql`
    select q.measure, trim_scale(sum(q.base_quantity))::text as remaining
    from harvest_quantities q join harvest_entries e on e.id = q.entry_id
    where e.id = ${rootId}::uuid or e.root_entry_id = ${rootId}::uuid
    group by q.measure`);
  return Object.fromEntries(rows.map((r) => [r.measure, r.remaining]));
}

export type NewEntry = {
  idempotencyKey: string;
  /** What was asked with the key (src/server/field/harvest.ts, requestHashOf). */
  requestHash: string;
  forager: Forager;
  parcelId: string;
  speciesId: string;
  method: Method;
  visitId: string | null;
  localDate: string;
  facts: CountingFacts;
  quantities: { measure: Measure; quantity: string; unit: Unit; baseQuantity: string }[];
  position: LonLat | null;
  photoUploadId: string | null;
  photoDistanceM: number | null;
  breach: boolean;
  acknowledgedOver: boolean;
  corrects: { entryId: string; rootId: string; reason: string } | null;
  /** When the server received it. */
  now: Date;
  /** The device's clock when it was recorded offline; absent for an entry recorded online. */
  deviceRecordedAt?: Date | null;
};

/**
 * Inserts an entry and its quantities (the kept totals follow by trigger). A key the forager already
 * used — the same key sent at the same moment — inserts nothing and returns null.
 */
export async function insertEntry(tx: Tx, e: NewEntry): Promise<StoredEntry | null> {
  const [entry] = await tx
    .insert(harvestEntries)
    .values({
      idempotencyKey: e.idempotencyKey,
      requestHash: e.requestHash,
      foragerId: e.forager.id,
      parcelId: e.parcelId,
      permitId: e.facts.permitId,
      clubId: e.facts.clubId,
      visitId: e.visitId,
      speciesId: e.speciesId,
      method: e.method,
      localDate: e.localDate,
      countedOn: e.facts.countedOn,
      countedVisitId: e.facts.countedVisitId,
      seasonStart: e.facts.seasonStart,
      seasonEnd: e.facts.seasonEnd,
      position: e.position ? { type: 'Point', coordinates: e.position } : null,
      photoUploadId: e.photoUploadId,
      photoDistanceM: e.photoDistanceM,
      breach: e.breach,
      acknowledgedOver: e.acknowledgedOver,
      correctsEntryId: e.corrects?.entryId ?? null,
      rootEntryId: e.corrects?.rootId ?? null,
      correctionReason: e.corrects?.reason ?? null,
      recordedBy: e.forager.id,
      recordedAt: e.now,
      deviceRecordedAt: e.deviceRecordedAt ?? null,
    })
    .onConflictDoNothing({ target: [harvestEntries.foragerId, harvestEntries.idempotencyKey] })
    .returning();
  if (!entry) return null;
  await tx.insert(harvestQuantities).values(e.quantities.map((q) => ({ entryId: entry.id, ...q })));
  return { ...entry, quantities: e.quantities };
}

/** A flag on an entry, with the tallies as they stood after it. */
export async function insertFlag(
  tx: Tx,
  { entry, decision, tallies, now }: { entry: StoredEntry; decision: Omit<FlagDecision, 'kind'> & { kind: Flag['kind']; message?: string }; tallies: Tally[]; now: Date },
) {
  await tx.insert(flags).values({
    kind: decision.kind,
    message: decision.message ?? null,
    entryId: entry.id,
    parcelId: entry.parcelId,
    speciesId: entry.speciesId,
    foragerId: entry.foragerId,
    permitId: entry.permitId,
    scopes: decision.scopes,
    worstState: decision.worstState,
    tallies: tallies.map((t) => ({ scope: t.scope, measure: t.measure, state: t.state, used: t.used, limit: t.limit.quantity, unit: t.limit.unit, percent: t.percent })),
    createdAt: now,
  });
}

/** Metres between a check-in position and where an uploaded photo's metadata places it; undefined when the upload is not the forager's photo. */
export async function photoDistance(db: Executor, { uploadId, foragerId, from }: { uploadId: string; foragerId: string; from: LonLat }): Promise<number | null | undefined> {
  const [photo] = await db.execute<{ distance: number | null }>(sql`
    select ST_Distance(u.gps_position::geography, ST_SetSRID(ST_MakePoint(${from[0]}, ${from[1]}), 4326)::geography) as distance
    from uploads u where u.id = ${uploadId} and u.owner_id = ${foragerId} and u.purpose = 'harvest-photo'`);
  return photo ? photo.distance : undefined;
}
