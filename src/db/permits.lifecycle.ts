import { desc, eq, sql } from 'drizzle-orm';
import { AppError, conflict, notFound } from '../lib/errors';
import { localDate } from '../lib/local-time';
import { missingForActive, mayMove, type Missing, type PermitState } from '../lib/permit-states';
import type { Tx } from './client';
import { permitCoreColumns } from './permits.queries';
import { auditEvents, parcels, permitEvents, permits, terms } from './schema';

/** Locks a permit row for the rest of the transaction, with what its state decisions need. */
export async function lockPermit(tx: Tx, permitId: string) {
  const rows = await tx
    .select({ ...permitCoreColumns, ownerId: parcels.ownerId })
    .from(permits)
    .innerJoin(parcels, eq(parcels.id, permits.parcelId))
    .where(eq(permits.id, permitId))
    .for('update', { of: permits });
  const permit = rows[0];
  if (!permit) throw notFound('Permit');
  return permit;
}

export type LockedPermit = Awaited<ReturnType<typeof lockPermit>>;

export async function currentTerms(tx: Tx, parcelId: string) {
  const [row] = await tx.select().from(terms).where(eq(terms.parcelId, parcelId)).orderBy(desc(terms.version)).limit(1);
  return row ?? null;
}

/** Moves a locked permit to `to`, recording who, when and why. Refuses moves the state table does not allow. */
export async function movePermit(
  tx: Tx,
  permit: LockedPermit,
  { to, by, actorId, reason, now }: { to: PermitState; by: 'landowner' | 'system'; actorId: string | null; reason: string; now: Date },
) {
  if (!mayMove(permit.state, to, by)) {
    throw conflict(undefined, `A permit that is ${permit.state} cannot become ${to}.`);
  }
  await tx.update(permits).set({ state: to, updatedAt: now }).where(eq(permits.id, permit.id));
  await tx.insert(permitEvents).values({ permitId: permit.id, fromState: permit.state, toState: to, actorId, reason, at: now });
  await tx.insert(auditEvents).values({ actorId, action: `permit.${to}`, subjectType: 'permit', subjectId: permit.id, detail: { from: permit.state, reason }, at: now });
  return { ...permit, state: to };
}

/** What the permit still lacks before it is active; empty when it is ready. */
export async function missingSteps(tx: Tx, permit: LockedPermit, now: Date): Promise<Missing[]> {
  const current = await currentTerms(tx, permit.parcelId);
  return missingForActive(permit, { currentTermsId: current?.id ?? null, today: localDate(now, permit.timeZone) });
}

/** An approved permit with nothing missing becomes active. Returns the permit as it now is. */
export async function activateIfReady(tx: Tx, permit: LockedPermit, { actorId, now }: { actorId: string | null; now: Date }) {
  if (permit.state !== 'approved') return permit;
  const missing = await missingSteps(tx, permit, now);
  if (missing.length > 0) return permit;
  return movePermit(tx, permit, { to: 'active', by: 'system', actorId, reason: 'Terms accepted and fee settled; the permit has begun.', now });
}

/** Records a settled fee (the payment webhook calls this) and activates the permit when ready. */
export async function recordFeePaid(tx: Tx, { permitId, paidAt, actorId }: { permitId: string; paidAt: Date; actorId: string | null }) {
  const permit = await lockPermit(tx, permitId);
  if (permit.feePaidAt) return permit;
  await tx.update(permits).set({ feePaidAt: paidAt }).where(eq(permits.id, permitId));
  await tx.insert(auditEvents).values({ actorId, action: 'permit.fee-paid', subjectType: 'permit', subjectId: permitId, detail: { feeMinor: permit.feeMinor, currency: permit.currency }, at: paidAt });
  return activateIfReady(tx, { ...permit, feePaidAt: paidAt }, { actorId, now: paidAt });
}

/** The holder accepts the parcel's current terms; the version accepted is kept on the permit. */
export async function acceptCurrentTerms(tx: Tx, { permitId, userId, now }: { permitId: string; userId: string; now: Date }) {
  const permit = await lockPermit(tx, permitId);
  if (permit.state !== 'approved' && permit.state !== 'active') {
    throw conflict(undefined, `Terms can be accepted once the permit is approved; this one is ${permit.state}.`);
  }
  const current = await currentTerms(tx, permit.parcelId);
  if (!current) throw new AppError(409, 'no-terms', 'This parcel has no terms to accept.');
  await tx.update(permits).set({ acceptedTermsId: current.id, termsAcceptedAt: now, termsAcceptedBy: userId }).where(eq(permits.id, permitId));
  await tx.insert(auditEvents).values({ actorId: userId, action: 'permit.terms-accepted', subjectType: 'permit', subjectId: permitId, detail: { termsVersion: current.version }, at: now });
  return activateIfReady(tx, { ...permit, acceptedTermsId: current.id }, { actorId: userId, now });
}

/** Approved permits whose first day has come, and permits past their last day, move on. */
export async function advancePermitsByDate(tx: Tx, { now }: { now: Date }) {
  const instant = now.toISOString();
  const due = await tx
    .select({ id: permits.id })
    .from(permits)
    .innerJoin(parcels, eq(parcels.id, permits.parcelId))
    .where(sql`${permits.state} in ('approved', 'active') and (
      ${permits.endsOn} < (${instant}::timestamptz at time zone ${parcels.timeZone})::date
      or (${permits.state} = 'approved' and ${permits.startsOn} <= (${instant}::timestamptz at time zone ${parcels.timeZone})::date))`);
  for (const { id } of due) {
    const permit = await lockPermit(tx, id);
    // It may have been revoked (or moved on) between the select and the lock.
    if (permit.state !== 'approved' && permit.state !== 'active') continue;
    if (permit.endsOn < localDate(now, permit.timeZone)) {
      await movePermit(tx, permit, { to: 'expired', by: 'system', actorId: null, reason: 'The last day of the permit has passed.', now });
    } else {
      await activateIfReady(tx, permit, { actorId: null, now });
    }
  }
}
