import { closeStaleVisits, findEntryByKey, insertEntry, insertFlag, lockAllowance, type StoredEntry } from '../../db/field.commands';
import { findFlagOfEntry, findSyncedCheckIn, insertSyncedCheckIn, permitStatesAt, visitForSync } from '../../db/field-sync.commands';
import { loadKnownParcelFacts, loadParcelFactsNear, loadUsage } from '../../db/field.queries';
import type { Db, Executor } from '../../db/client';
import { countingFactsFor, measuresOf } from '../../lib/field/counting';
import { decideCheckIn, endOfLocalDay, formatDay, localDateAt, methodAllowed, projectEntry, talliesFor } from '../../lib/field';
import { clockRefusal, permitRecordedUnder, syncFlagFor, syncSeason, type SyncFlag } from '../../lib/field/sync';
import type { Forager, ParcelFacts } from '../../lib/field/types';
import { AppError } from '../../lib/errors';
import type { FieldSyncInput, SyncItem, SyncItemRead } from '../../lib/field.schemas';
import { keyInUse, replayOf, requestHashOf, storedQuantities, type AfterEntryWritten } from './harvest';

/**
 * Items a device recorded offline, sent when the connection returns (POST /api/field/sync). Each
 * item is decided on its own, in the order sent, each in its own transaction: a failure of one undoes
 * none before it. An item's key is the forager's own, as with online entries: sent again, it answers
 * its first result (`replayed`) and records nothing twice.
 *
 * An entry counts on its parcel's local day of the device's instant, in that day's visit, and is
 * checked with the field engine against the totals in the database now (others' entries synced or
 * recorded meanwhile count). It is never dropped for what it finds: over without the going over
 * confirmed on the device, it is recorded and flagged `over-on-sync`; taken where or when harvest was
 * not clear, it is recorded and flagged `off-permit`. Only a malformed item, a parcel or species the
 * forager could never see, or a device clock that cannot be believed is refused (recorded nowhere).
 */

export type SyncStatus = 'recorded' | 'flagged' | 'refused';

export type SyncResult = {
  idempotencyKey: string;
  kind: SyncItem['kind'];
  status: SyncStatus;
  entryId?: string;
  checkInId?: string;
  flag?: { kind: SyncFlag['kind']; message: string };
  message?: string;
  replayed: boolean;
};

type Ctx = { forager: Forager; packAsOf: Date; now: Date; afterWrite?: AfterEntryWritten };

const refused = (item: SyncItem, message: string): SyncResult => ({ idempotencyKey: item.idempotencyKey, kind: item.kind, status: 'refused', message, replayed: false });

/** A batch as the endpoint read it: each item parsed on its own (src/lib/field.schemas.ts, parseSyncItems). */
export type SyncBatch = { packAsOf: Date; items: (SyncItem | SyncItemRead)[] };

/** `afterWrite` runs in each new entry's transaction (its notice mail), as with recordHarvest. */
export async function syncFieldItems(
  db: Db,
  { forager, input, now = new Date(), afterWrite }: { forager: Forager; input: FieldSyncInput | SyncBatch; now?: Date; afterWrite?: AfterEntryWritten },
): Promise<SyncResult[]> {
  const results: SyncResult[] = [];
  // Visits of days that are over end at their day's end first, so an item finds them as they were.
  await closeStaleVisits(db, { now, foragerId: forager.id });
  for (const read of input.items) {
    if ('ok' in read && !read.ok) {
      results.push({ idempotencyKey: read.idempotencyKey, kind: read.kind, status: 'refused', message: read.message, replayed: false });
      continue;
    }
    const item = 'ok' in read ? read.item : read;
    const ctx = { forager, packAsOf: input.packAsOf, now, afterWrite };
    try {
      results.push(item.kind === 'check-in' ? await syncCheckIn(db, item, ctx) : await syncEntry(db, item, ctx));
    } catch (error) {
      // A refusal the engine or a guard explains (a unit the limits do not count, a key used for something else) is this item's; the rest stop the request.
      if (error instanceof AppError && error.status < 500) results.push(refused(item, error.message));
      else throw error;
    }
  }
  return results;
}

/**
 * The parcels as they stood at the device's instant, as far as the permits go: a permit revoked or
 * expired after it was still in force then, one granted after it not yet. (The parcel's other
 * facts — closures, zones, allowances, terms — are read as they are now.)
 */
async function asAt(db: Executor, parcels: ParcelFacts[], at: Date): Promise<ParcelFacts[]> {
  const states = await permitStatesAt(db, { permitIds: parcels.flatMap((p) => p.permits.map((pm) => pm.id)), at });
  if (states.size === 0) return parcels;
  return parcels.map((p) => ({ ...p, permits: p.permits.map((pm) => ({ ...pm, state: states.get(pm.id) ?? pm.state })) }));
}

type CheckInItem = Extract<SyncItem, { kind: 'check-in' }>;
type EntryItem = Extract<SyncItem, { kind: 'entry' }>;

const keyReusedMessage =
  'You already used this idempotency key for something else, so this was not saved. Send a new key for a new item; send exactly the same item to repeat one.';

async function syncCheckIn(db: Db, item: CheckInItem, { forager, packAsOf, now }: Ctx): Promise<SyncResult> {
  const requestHash = requestHashOf('sync-check-in', item);
  const answered = (id: string, replayed: boolean): SyncResult => ({ idempotencyKey: item.idempotencyKey, kind: 'check-in', status: 'recorded', checkInId: id, replayed });
  const replay = async (tx: Executor) => {
    const prior = await findSyncedCheckIn(tx, { foragerId: forager.id, key: item.idempotencyKey });
    if (!prior) return null;
    if (prior.requestHash !== requestHash) return refused(item, keyReusedMessage);
    return answered(prior.id, true);
  };
  const first = await replay(db);
  if (first) return first;
  const skew = clockRefusal({ recordedAt: item.recordedAt, packAsOf, now });
  if (skew) return refused(item, skew);
  const { longitude, latitude, accuracyM, source } = item.position;
  const parcels = await asAt(db, await loadParcelFactsNear(db, { longitude, latitude, radiusM: Math.max(accuracyM, 1), forager }), item.recordedAt);
  // The verdict at the device's instant; what remains is not told back, so no totals are read.
  const answer = decideCheckIn({ position: [longitude, latitude], accuracyM, at: item.recordedAt, forager, parcels, usage: () => ({}) });
  return db.transaction(async (tx) => {
    const visitId =
      answer.verdict === 'clear' && answer.parcel
        ? await visitForSync(tx, {
            forager, parcelId: answer.parcel.id, localDate: answer.localDate, permitId: answer.permitId, at: item.recordedAt,
            dayEnds: endOfLocalDay(answer.localDate, answer.parcel.timeZone), now,
          })
        : null;
    const id = await insertSyncedCheckIn(tx, {
      forager, idempotencyKey: item.idempotencyKey, requestHash, position: [longitude, latitude], accuracyM, source,
      verdict: answer.verdict, parcelId: answer.parcel?.id ?? null, visitId, recordedAt: item.recordedAt, now,
    });
    if (id) return answered(id, false);
    // The same item sent at the same moment: the other insert won; answer with its check-in (this one's visit rolls back).
    const other = await replay(tx);
    if (!other) throw keyInUse();
    throw Object.assign(new Rollback(), { result: other });
  }).catch((error: unknown) => {
    if (error instanceof Rollback) return error.result;
    throw error;
  });
}

class Rollback extends Error {
  result!: SyncResult;
}

function entryResult(entry: StoredEntry, flag: { kind: SyncFlag['kind']; message: string | null } | null, replayed: boolean): SyncResult {
  const raised = flag ? { kind: flag.kind, message: flag.message ?? '' } : undefined;
  return {
    idempotencyKey: entry.idempotencyKey,
    kind: 'entry',
    status: flag && flag.kind !== 'nearing' ? 'flagged' : 'recorded',
    entryId: entry.id,
    ...(raised ? { flag: raised } : {}),
    replayed,
  };
}

async function entryReplay(db: Executor, forager: Forager, key: string, requestHash: string): Promise<SyncResult | null> {
  const prior = replayOf(await findEntryByKey(db, { foragerId: forager.id, key }), requestHash);
  if (!prior) return null;
  return entryResult(prior.entry, await findFlagOfEntry(db, { entryId: prior.entry.id }), true);
}

async function syncEntry(db: Db, item: EntryItem, { forager, packAsOf, now, afterWrite }: Ctx): Promise<SyncResult> {
  const requestHash = requestHashOf('sync-entry', item);
  const first = await entryReplay(db, forager, item.idempotencyKey, requestHash);
  if (first) return first;
  const skew = clockRefusal({ recordedAt: item.recordedAt, packAsOf, now });
  if (skew) return refused(item, skew);
  const known = await loadKnownParcelFacts(db, { parcelId: item.parcelId, forager });
  const parcel = known ? (await asAt(db, [known], item.recordedAt))[0] : null;
  if (!parcel) return refused(item, 'That parcel was not found among those open to you, so this entry was not saved. Tell the landowner what you took.');
  const allowance = parcel.allowances.find((a) => a.speciesId === item.speciesId);
  if (!allowance) return refused(item, `That species is not allowed on ${parcel.name}, so this entry was not saved. Tell the landowner what you took.`);

  return db.transaction(
    async (tx) => {
      // Entries on one parcel and species take turns, online and synced alike (recordHarvest).
      if (!(await lockAllowance(tx, { parcelId: parcel.id, speciesId: item.speciesId }))) {
        return refused(item, `That species is not allowed on ${parcel.name}, so this entry was not saved. Tell the landowner what you took.`);
      }
      const replay = await entryReplay(tx, forager, item.idempotencyKey, requestHash);
      if (replay) return replay;
      const { longitude, latitude, accuracyM } = item.position;
      const localDate = localDateAt(item.recordedAt, parcel.timeZone);
      // Where and when it was taken, as the engine decides a check-in there and then.
      const answer = decideCheckIn({ position: [longitude, latitude], accuracyM, at: item.recordedAt, forager, parcels: [parcel], usage: () => ({}) });
      const notClear: string[] = answer.verdict === 'clear' && answer.parcel?.id === parcel.id ? [] : [...answer.reasons];
      const season = syncSeason(allowance, localDate);
      if (!season.inSeason) notClear.push(`${allowance.commonName} was out of season on ${parcel.name} on ${formatDay(localDate)}.`);
      const method = methodAllowed(allowance, item.method);
      if (!method.allowed) notClear.push(method.reason);
      const permit = (answer.verdict === 'clear' ? parcel.permits.find((p) => p.id === answer.permitId) : null) ?? permitRecordedUnder(parcel, forager, localDate);

      const visitId = await visitForSync(tx, {
        forager, parcelId: parcel.id, localDate, permitId: permit?.id ?? null, at: item.recordedAt, dayEnds: endOfLocalDay(localDate, parcel.timeZone), now,
      });
      const windows = measuresOf(allowance).map((measure) => ({
        parcelId: parcel.id, speciesId: allowance.speciesId, measure, seasonStart: season.start, seasonEnd: season.end, day: localDate, visit: visitId,
      }));
      const usage = (await loadUsage(tx, { forager, windows })).usage.get(parcel.id) ?? {};
      const context = { forager, permit, thresholdPercent: parcel.nearingThresholdPercent };
      // A unit of a measure the limits do not count throws UnitMismatch: this item is refused, naming the unit.
      const projection = projectEntry(allowance, usage, item.quantities, context);
      const before = talliesFor(allowance, usage, context);
      // The counting rule (src/lib/field/counting.ts); out of season, the entry's own day is its season (syncSeason).
      const facts = countingFactsFor({ allowance, permit, visitId, localDate }) ?? {
        countedOn: localDate, countedVisitId: visitId, permitId: permit?.id ?? null, clubId: permit?.holderClubId ?? null, seasonStart: season.start, seasonEnd: season.end,
      };
      const breach = projection.wouldBreach;
      const entry = await insertEntry(tx, {
        idempotencyKey: item.idempotencyKey,
        requestHash,
        forager,
        parcelId: parcel.id,
        speciesId: item.speciesId,
        method: item.method,
        visitId,
        localDate,
        facts,
        quantities: storedQuantities(item.quantities, projection.bases),
        position: [longitude, latitude],
        photoUploadId: null,
        photoDistanceM: null,
        breach,
        acknowledgedOver: item.acknowledgeOver,
        corrects: null,
        now,
        deviceRecordedAt: item.recordedAt,
      });
      if (!entry) {
        const other = await entryReplay(tx, forager, item.idempotencyKey, requestHash);
        if (!other) throw keyInUse();
        return other;
      }
      const flag = syncFlagFor(before, projection.tallies, { breach, acknowledged: item.acknowledgeOver, offPermit: notClear.length > 0 ? notClear : null });
      if (flag) await insertFlag(tx, { entry, decision: flag, tallies: projection.tallies, now });
      await afterWrite?.(tx, entry);
      return entryResult(entry, flag, false);
    },
    { isolationLevel: 'read committed' },
  );
}
