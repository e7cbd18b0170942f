import { chainRemaining, findEntryByKey, findOwnEntry, insertEntry, insertFlag, lockAllowance } from '../../db/field.commands';
import { loadParcelFacts, loadUsage } from '../../db/field.queries';
import type { Db } from '../../db/client';
import { flagFor, measuresOf, type CountingFacts } from '../../lib/field/counting';
import { localDateAt, projectEntry, talliesFor } from '../../lib/field';
import type { Forager } from '../../lib/field/types';
import { AppError, invalidInput, notFound } from '../../lib/errors';
import type { CorrectionInput } from '../../lib/field.schemas';
import { addDecimals, compareDecimals, measureOf, toBase, units, type Measure } from '../../lib/units';
import { keyInUse, replayOf, requestHashOf, storedQuantities, type AfterEntryWritten, type RecordResult } from './harvest';

const measureWords = (m: Measure) => (m === 'mass' ? 'a weight' : m === 'volume' ? 'a volume' : `a count of ${m.replace('-', ' ')}`);

/**
 * Corrects one of the forager's entries: a new entry with signed quantities and a reason. It needs
 * no check-in (it is made at home, from the ledger) and counts where the root of its chain counted:
 * that local day, visit, permit and season. It is checked against that day's totals, not today's:
 * adding 500 g to yesterday's entry that takes yesterday over its day limit is a breach of
 * yesterday, flagged and told like any other. It may not take away more than the chain still counts.
 */
export async function correctEntry(
  db: Db,
  { forager, entryId, input, now = new Date(), afterWrite }: { forager: Forager; entryId: string; input: CorrectionInput; now?: Date; afterWrite?: AfterEntryWritten },
): Promise<RecordResult> {
  return db.transaction(
    async (tx) => {
      const target = await findOwnEntry(tx, { entryId, foragerId: forager.id });
      if (!target) throw notFound('The entry to correct');
      await lockAllowance(tx, { parcelId: target.parcelId, speciesId: target.speciesId });
      const requestHash = requestHashOf('correction', input, { entryId });
      const replay = replayOf(await findEntryByKey(tx, { foragerId: forager.id, key: input.idempotencyKey }), requestHash);
      if (replay) return replay;
      const rootId = target.rootEntryId ?? target.id;
      const root = rootId === target.id ? target : await findOwnEntry(tx, { entryId: rootId, foragerId: forager.id });
      if (!root) throw notFound('The entry to correct');

      // Only the chain's own measures, and never below nothing in any of them.
      const remaining = await chainRemaining(tx, { rootId });
      for (const q of input.quantities) {
        const measure = measureOf(q.unit);
        const left = remaining[measure];
        if (left === undefined) {
          const had = root.quantities.map((r) => `${measureWords(r.measure)} (${units[r.unit].label})`).join(' and ');
          throw new AppError(400, 'unit-mismatch', `This entry was recorded as ${had}; correct it in the same kind of unit, not ${units[q.unit].label}.`, 'quantities');
        }
        if (compareDecimals(addDecimals(left, toBase(q.quantity, q.unit)), '0') < 0) {
          throw invalidInput('quantities', 'A correction cannot take away more than the entry (with its earlier corrections) still counts.');
        }
      }

      const facts: CountingFacts = {
        countedOn: root.countedOn, countedVisitId: root.countedVisitId, permitId: root.permitId, clubId: root.clubId, seasonStart: root.seasonStart, seasonEnd: root.seasonEnd,
      };
      const parcel = await loadParcelFacts(tx, { parcelId: root.parcelId, forager });
      if (!parcel) throw notFound('The parcel of that entry');
      const allowance = parcel.allowances.find((a) => a.speciesId === root.speciesId);
      const permit = parcel.permits.find((p) => p.id === root.permitId) ?? null;
      const context = { forager, permit, thresholdPercent: parcel.nearingThresholdPercent };

      // Checked against the totals of the day, visit and season it counts in. An allowance removed
      // since has no limits left to check against: the correction is recorded as it is.
      let check: { before: ReturnType<typeof talliesFor>; projection: ReturnType<typeof projectEntry> } | null = null;
      if (allowance) {
        const windows = measuresOf(allowance).map((measure) => ({
          parcelId: parcel.id, speciesId: allowance.speciesId, measure, seasonStart: facts.seasonStart, seasonEnd: facts.seasonEnd, day: facts.countedOn, visit: facts.countedVisitId,
        }));
        const usage = (await loadUsage(tx, { forager, windows })).usage.get(parcel.id) ?? {};
        check = { before: talliesFor(allowance, usage, context), projection: projectEntry(allowance, usage, input.quantities, context, { partial: true }) };
      }
      const breach = check?.projection.wouldBreach ?? false;
      if (breach && !input.acknowledgeOver) {
        throw new AppError(409, 'would-go-over', 'This correction would take a limit over on the day it counts on. Correct it by less, or confirm that it went over; the landowner is told.', 'quantities', { projection: check?.projection });
      }
      const bases = Object.fromEntries(input.quantities.map((q) => [measureOf(q.unit), toBase(q.quantity, q.unit)]));
      const entry = await insertEntry(tx, {
        idempotencyKey: input.idempotencyKey,
        requestHash,
        forager,
        parcelId: root.parcelId,
        speciesId: root.speciesId,
        method: root.method,
        visitId: null,
        localDate: localDateAt(now, parcel.timeZone),
        facts,
        quantities: storedQuantities(input.quantities, bases),
        position: null,
        photoUploadId: null,
        photoDistanceM: null,
        breach,
        acknowledgedOver: Boolean(input.acknowledgeOver),
        corrects: { entryId: target.id, rootId, reason: input.reason },
        now,
      });
      if (!entry) {
        const first = replayOf(await findEntryByKey(tx, { foragerId: forager.id, key: input.idempotencyKey }), requestHash);
        if (!first) throw keyInUse();
        return first;
      }
      const decision = check ? flagFor(check.before, check.projection.tallies, breach) : null;
      if (decision && check) await insertFlag(tx, { entry, decision, tallies: check.projection.tallies, now });
      await afterWrite?.(tx, entry);
      return { entry, replayed: false, tallies: check?.projection.tallies ?? null };
    },
    { isolationLevel: 'read committed' },
  );
}
