import { and, eq, getTableColumns, isNull, sql, type SQL } from 'drizzle-orm';
import { PgDialect } from 'drizzle-orm/pg-core';
import type { CountingFacts, FlagDecision } from '../lib/field/counting';
import type { Forager, LonLat, Method, Tally, Verdict } from '../lib/field/types';
import type { Measure, Unit } from '../lib/units';
import { isPool, type Db, type Executor, type Tx } from './client';
import { allowances, flags, harvestEntries, harvestQuantities, visits, type Flag } from './schema';

/**
 * Writes of the field: visits and check-ins, ledger entries with their quantities, and flags.
 * The use cases in src/server/field/ decide; these only read and write rows.
 */

const dialect = new PgDialect();

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
 *
 * One statement does it all (checkInStatement), after the lock in the same transaction: under READ
 * COMMITTED each statement reads a snapshot taken when it starts (PostgreSQL manual §13.2.1), so it
 * sees the visits as the forager's previous check-in left them. On the pool the statements (`first`,
 * a read the caller wants answered before the check-in is logged; begin, lock, the check-in,
 * commit) are sent at once on one connection (postgres.js pipelines queries not yet answered), so
 * logging a check-in costs one round trip to the database, not seven. Returns the visit, and the
 * rows `first` read.
 */
export async function recordCheckIn(db: Executor, r: CheckInRecord, { first }: { first?: SQL } = {}): Promise<{ visitId: string | null; firstRows: Record<string, unknown>[] }> {
  const statement = checkInStatement(r);
  const lock = r.visit && r.parcelId ? sql`select pg_advisory_xact_lock(hashtextextended(${`visits:${r.forager.id}`}, 0))` : null;
  const client = isPool(db) ? db.$client : null;
  if (!client) {
    const firstRows = first ? ((await db.execute(first)) as unknown as Record<string, unknown>[]) : [];
    const run = async (tx: Executor) => {
      if (lock) await tx.execute(lock);
      const [row] = (await tx.execute(statement)) as unknown as { visit_id: string | null }[];
      return row?.visit_id ?? null;
    };
    return { visitId: lock ? await db.transaction(run) : await run(db), firstRows };
  }
  const connection = await client.reserve();
  try {
    const send = (query: SQL) => {
      const { sql: text, params } = dialect.sqlToQuery(query);
      return connection.unsafe(text, params as never[]);
    };
    // Sent without waiting for each answer; an error rolls the transaction back before the connection is released.
    const sent = [
      first ? send(first) : Promise.resolve([]),
      ...(lock ? [connection.unsafe('begin'), send(lock)] : []),
      send(statement),
      ...(lock ? [connection.unsafe('commit')] : []),
    ];
    const settled = await Promise.allSettled(sent);
    const failed = settled.find((s): s is PromiseRejectedResult => s.status === 'rejected');
    if (failed) {
      if (lock) await connection.unsafe('rollback').catch(() => {});
      throw failed.reason;
    }
    const firstRows = (await sent[0]) as unknown as Record<string, unknown>[];
    const [row] = (await sent[lock ? 3 : 1]) as unknown as { visit_id: string | null }[];
    return { visitId: row?.visit_id ?? null, firstRows };
  } finally {
    connection.release();
  }
}

/**
 * The check-in's row and, for a clear verdict, its visit, in one statement: the forager's open visit
 * on another parcel or day (or past its local midnight) ends; the one on this parcel today is kept,
 * else one opens; the check-in names it. Data-modifying WITH queries all read the statement's one
 * snapshot (PostgreSQL manual §7.8.4), so `kept` leaves out the visit `ended` closes.
 */
function checkInStatement(r: CheckInRecord) {
  const instant = r.now.toISOString();
  const position = sql`ST_SetSRID(ST_MakePoint(${r.position[0]}::float8, ${r.position[1]}::float8), 4326)`;
  const row = (visitId: SQL) => sql`
    insert into check_ins (forager_id, position, accuracy_m, verdict, parcel_id, visit_id, at, received_at, position_source)
    values (${r.forager.id}, ${position}, ${r.accuracyM}::float8, ${r.verdict}::verdict, ${r.parcelId}::uuid, ${visitId},
      ${instant}::timestamptz, ${instant}::timestamptz, ${r.source ?? 'gps'}::position_source)
    returning visit_id`;
  const { visit, parcelId } = r;
  if (!visit || !parcelId) return row(sql`null::uuid`);
  return sql`
    with ended as (
      update visits v set
        ended_at = least(${visitEnds}, ${instant}::timestamptz),
        ended_by = case when ${visitEnds} <= ${instant}::timestamptz then 'end-of-day'::visit_end else 'check-out'::visit_end end
      where v.forager_id = ${r.forager.id} and v.ended_at is null
        and (${visitEnds} <= ${instant}::timestamptz or v.parcel_id <> ${parcelId}::uuid or v.local_date <> ${visit.localDate}::date)
      returning v.id),
    kept as (
      select v.id from visits v where v.forager_id = ${r.forager.id} and v.ended_at is null and v.id not in (select id from ended)),
    opened as (
      insert into visits (forager_id, parcel_id, permit_id, local_date, started_at)
      select ${r.forager.id}, ${parcelId}::uuid, ${visit.permitId}::uuid, ${visit.localDate}::date, ${instant}::timestamptz
      where not exists (select 1 from kept)
      returning id)
    ${row(sql`(select id from kept union all select id from opened limit 1)`)}`;
}

export async function checkOut(db: Executor, { visitId, foragerId, now }: { visitId: string; foragerId: string; now: Date }) {
  const rows = await db
    .update(visits)
    .set({ endedAt: now, endedBy: 'check-out' })
    .where(and(eq(visits.id, visitId), eq(visits.foragerId, foragerId), isNull(visits.endedAt)))
    .returning({ id: visits.id });
  return rows.length > 0;
}

/** A forager's visit by id, with the position and accuracy of its latest check-in, in one statement. */
export async function findVisit(db: Executor, { visitId, foragerId }: { visitId: string; foragerId: string }) {
  const [row] = await db
    .select({
      ...getTableColumns(visits),
      checkIn: sql<{ position: { coordinates: LonLat }; accuracyM: number } | null>`(
        select json_build_object('position', ST_AsGeoJSON(c.position)::json, 'accuracyM', c.accuracy_m) from check_ins c
        where c.visit_id = "visits"."id" order by c.at desc limit 1)`,
    })
    .from(visits)
    .where(and(eq(visits.id, visitId), eq(visits.foragerId, foragerId)));
  if (!row) return null;
  const { checkIn, ...visit } = row;
  return { ...visit, checkIn: checkIn ? { position: checkIn.position.coordinates, accuracyM: checkIn.accuracyM } : null };
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
