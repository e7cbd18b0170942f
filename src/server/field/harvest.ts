import { createHash } from 'node:crypto';
import { findEntryByKey, findVisit, insertEntry, insertFlag, lockAllowance, photoDistance, type StoredEntry } from '../../db/field.commands';
import { loadParcelFacts, loadUsage } from '../../db/field.queries';
import type { Db, Executor, Tx } from '../../db/client';
import { countingFactsFor, flagFor, usageWindows } from '../../lib/field/counting';
import { decideCheckIn, formatDay, localDateAt, methodAllowed, projectEntry, talliesFor, type Projection } from '../../lib/field';
import type { Forager, Tally } from '../../lib/field/types';
import { AppError, invalidInput, notFound } from '../../lib/errors';
import type { HarvestInput } from '../../lib/field.schemas';
import { measureOf, type Measure } from '../../lib/units';

/**
 * Previewing and recording a harvest. Both decide the same way (`assess`): the visit must be the
 * forager's and still today's on its parcel, the verdict at its check-in must still be clear, the
 * species in season and the method allowed; then the engine projects the entry onto the totals.
 * The preview takes no locks. Recording locks the allowance first, so entries saved at the same
 * moment are checked one after the other, and stores the counting facts on the entry.
 */

export const keyInUse = () => new AppError(409, 'key-in-use', 'Another request with this idempotency key is being saved at this moment; send this one again in a moment.', 'idempotencyKey');

const keyReused = () =>
  new AppError(
    422,
    'key-reused',
    'You already used this idempotency key for a different entry, so this one was not saved. Send a new key for a new entry; send exactly the same request to repeat one.',
    'idempotencyKey',
  );

/**
 * What was asked with an idempotency key, as a SHA-256 of the parsed request without the key: the
 * same key sent with anything else is refused rather than answered with the first entry.
 */
export function requestHashOf(kind: 'harvest' | 'correction' | 'sync-entry' | 'sync-check-in', { idempotencyKey: _key, ...asked }: { idempotencyKey: string } & Record<string, unknown>, about: Record<string, string> = {}) {
  return createHash('sha256').update(JSON.stringify({ kind, ...about, ...asked })).digest('hex');
}

type FoundVisit = NonNullable<Awaited<ReturnType<typeof findVisit>>>;

/** What an entry would do; `found` is the visit when the caller has read it already (recording reads it before taking its lock). */
async function assess(db: Executor, { forager, input, now, found }: { forager: Forager; input: HarvestInput; now: Date; found?: FoundVisit }) {
  const visit = found ?? (await findVisit(db, { visitId: input.visitId, foragerId: forager.id }));
  if (!visit) throw notFound('Visit');
  const parcel = await loadParcelFacts(db, { parcelId: visit.parcelId, forager });
  if (!parcel) throw notFound('Visit');
  const localDate = localDateAt(now, parcel.timeZone);
  // A visit is one local day: after its parcel's midnight it is over, checked out or not.
  if (visit.endedAt || visit.localDate !== localDate) {
    throw new AppError(409, 'visit-ended', `Your visit to ${parcel.name} on ${formatDay(visit.localDate)} has ended. Check in again to record more.`);
  }
  if (!visit.checkIn) throw new AppError(409, 'no-check-in', 'Check in on the parcel before recording a harvest.');
  const { usage: usageByParcel } = await loadUsage(db, { forager, windows: usageWindows(parcel, localDate, visit.id) });
  const usage = usageByParcel.get(parcel.id) ?? {};
  const answer = decideCheckIn({ position: visit.checkIn.position, accuracyM: visit.checkIn.accuracyM, at: now, forager, parcels: [parcel], usage: () => usage });
  if (answer.verdict !== 'clear' || answer.parcel?.id !== parcel.id) {
    throw new AppError(409, 'not-clear', answer.reasons.join(' ') || 'Harvest is not allowed here now.');
  }
  const allowance = parcel.allowances.find((a) => a.speciesId === input.speciesId);
  const species = answer.species.find((s) => s.speciesId === input.speciesId);
  if (!allowance || !species) throw invalidInput('speciesId', 'That species is not allowed on this parcel; choose one from the list.');
  if (!species.inSeason) throw new AppError(409, 'out-of-season', `${allowance.commonName} is out of season here today.`, 'speciesId');
  const method = methodAllowed(allowance, input.method);
  if (!method.allowed) throw invalidInput('method', method.reason);
  const permit = parcel.permits.find((p) => p.id === answer.permitId) ?? null;
  const context = { forager, permit, thresholdPercent: parcel.nearingThresholdPercent };
  // A unit of a measure the limits do not count throws UnitMismatch: a 400 naming the unit.
  const projection = projectEntry(allowance, usage, input.quantities, context);
  const facts = countingFactsFor({ allowance, permit, visitId: visit.id, localDate });
  if (!facts) throw new AppError(409, 'out-of-season', `${allowance.commonName} is out of season here today.`, 'speciesId');
  return { visit, parcel, localDate, projection, facts, before: talliesFor(allowance, usage, context) };
}

/** What the tallies would be after this entry; nothing is saved and nothing is locked. */
export async function previewHarvest(db: Executor, { forager, input, now = new Date() }: { forager: Forager; input: HarvestInput; now?: Date }): Promise<Projection> {
  return (await assess(db, { forager, input, now })).projection;
}

export type RecordResult = { entry: StoredEntry; replayed: boolean; tallies: Tally[] | null };

/**
 * Work that must stand or fall with a new entry (its notice mail), run in the entry's transaction after
 * the entry and its flag are written; a replay runs none. When it throws, nothing of the entry is kept.
 */
export type AfterEntryWritten = (tx: Tx, entry: StoredEntry) => Promise<void>;

/** The quantities of an entry as the ledger stores them, each with its exact base-unit value. */
export function storedQuantities(quantities: HarvestInput['quantities'], bases: Partial<Record<Measure, string>>) {
  return quantities.map((q) => {
    const measure = measureOf(q.unit);
    return { measure, quantity: q.quantity, unit: q.unit, baseQuantity: bases[measure] ?? '0' };
  });
}

/** A key sent again with the same request answers with its first entry; with another request it is refused (422). */
export function replayOf(entry: StoredEntry | null, requestHash: string): RecordResult | null {
  if (!entry) return null;
  if (entry.requestHash !== null && entry.requestHash !== requestHash) throw keyReused();
  return { entry, replayed: true, tallies: null };
}

/**
 * Records one harvest entry. An entry that would take a limit over needs `acknowledgeOver` and is
 * then flagged as a breach; one that moves a tally into nearing or reached raises a flag too.
 */
export async function recordHarvest(
  db: Db,
  { forager, input, now = new Date(), afterWrite }: { forager: Forager; input: HarvestInput; now?: Date; afterWrite?: AfterEntryWritten },
): Promise<RecordResult> {
  return db.transaction(
    async (tx) => {
      const visit = await findVisit(tx, { visitId: input.visitId, foragerId: forager.id });
      if (!visit) throw notFound('Visit');
      // Sent together on the transaction's connection (postgres.js pipelines them, in this order): the lock is taken before the key is read.
      const [locked, sameKey] = await Promise.all([
        lockAllowance(tx, { parcelId: visit.parcelId, speciesId: input.speciesId }),
        findEntryByKey(tx, { foragerId: forager.id, key: input.idempotencyKey }),
      ]);
      if (!locked) throw invalidInput('speciesId', 'That species is not allowed on this parcel; choose one from the list.');
      const requestHash = requestHashOf('harvest', input);
      const replay = replayOf(sameKey, requestHash);
      if (replay) return replay;
      const { parcel, localDate, projection, facts, before } = await assess(tx, { forager, input, now, found: visit });
      const breach = projection.wouldBreach;
      if (breach && !input.acknowledgeOver) {
        throw new AppError(409, 'would-go-over', 'This entry would take a limit over. Take less, or confirm that you are going over; the landowner is told.', 'quantities', { projection });
      }
      const position = visit.checkIn?.position ?? null;
      let photoDistanceM: number | null = null;
      if (input.photoUploadId && position) {
        const distance = await photoDistance(tx, { uploadId: input.photoUploadId, foragerId: forager.id, from: position });
        if (distance === undefined) throw invalidInput('photoUploadId', 'That photo was not found among your uploads; upload it again.');
        photoDistanceM = distance;
      }
      const entry = await insertEntry(tx, {
        idempotencyKey: input.idempotencyKey,
        requestHash,
        forager,
        parcelId: parcel.id,
        speciesId: input.speciesId,
        method: input.method,
        visitId: visit.id,
        localDate,
        facts,
        quantities: storedQuantities(input.quantities, projection.bases),
        position,
        photoUploadId: input.photoUploadId ?? null,
        photoDistanceM,
        breach,
        acknowledgedOver: Boolean(input.acknowledgeOver),
        corrects: null,
        now,
      });
      // The same key sent at the same moment for another species took another lock: the later
      // insert waits for the first, then finds the key taken, and answers with the first entry.
      if (!entry) {
        const first = replayOf(await findEntryByKey(tx, { foragerId: forager.id, key: input.idempotencyKey }), requestHash);
        if (!first) throw keyInUse();
        return first;
      }
      const decision = flagFor(before, projection.tallies, breach);
      if (decision) await insertFlag(tx, { entry, decision, tallies: projection.tallies, now });
      await afterWrite?.(tx, entry);
      return { entry, replayed: false, tallies: projection.tallies };
    },
    { isolationLevel: 'read committed' },
  );
}
