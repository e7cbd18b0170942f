import { and, eq, isNull, sql } from 'drizzle-orm';
import { AppError, invalidInput, notFound } from '../lib/errors';
import type { GrantPermitInput } from '../lib/permits.schemas';
import { localDate } from '../lib/local-time';
import { formatDay } from '../lib/field/words';
import { compareDecimals, measureOf, toBase, unitsOfMeasure, type Unit } from '../lib/units';
import { formatLimit } from '../lib/tally-words';
import type { Tx } from './client';
import { activateIfReady, lockPermit, movePermit } from './permits.lifecycle';
import { allowances, clubMemberships, limits, parcels, permitEvents, permits } from './schema';

type Holder = { userId: string } | { clubId: string };

async function insertPermit(
  tx: Tx,
  values: { parcelId: string; holder: Holder; startsOn: string; endsOn: string; feeMinor: number; currency: string; note: string; requestedBy: string | null; now: Date },
) {
  const [row] = await tx
    .insert(permits)
    .values({
      parcelId: values.parcelId,
      holderUserId: 'userId' in values.holder ? values.holder.userId : null,
      holderClubId: 'clubId' in values.holder ? values.holder.clubId : null,
      state: values.requestedBy ? 'requested' : 'approved',
      startsOn: values.startsOn,
      endsOn: values.endsOn,
      feeMinor: values.feeMinor > 0 ? values.feeMinor : null,
      currency: values.feeMinor > 0 ? values.currency : null,
      requestNote: values.note,
      requestedBy: values.requestedBy,
      createdAt: values.now,
      updatedAt: values.now,
    })
    .returning({ id: permits.id });
  if (!row) throw new Error('the permit was not saved');
  return row.id;
}

/**
 * The landowner grants a permit directly: it starts `approved` and becomes active once the holder
 * has accepted the terms and paid any fee, from its first day. Permit limits may only tighten.
 */
export async function grantPermit(tx: Tx, { parcelId, ownerId, holder, input, now }: { parcelId: string; ownerId: string; holder: Holder; input: GrantPermitInput; now: Date }) {
  const [parcel] = await tx.select({ id: parcels.id }).from(parcels).where(and(eq(parcels.id, parcelId), eq(parcels.ownerId, ownerId))).for('update');
  if (!parcel) throw notFound('Parcel');
  const permitId = await insertPermit(tx, { parcelId, holder, startsOn: input.startsOn, endsOn: input.endsOn, feeMinor: input.feeMinor, currency: input.currency, note: input.note, requestedBy: null, now });
  await tx.insert(permitEvents).values({ permitId, fromState: null, toState: 'approved', actorId: ownerId, reason: input.note || 'Granted by the landowner.', at: now });
  await addPermitLimits(tx, { parcelId, permitId, isClub: 'clubId' in holder, limits: input.limits });
  const permit = await lockPermit(tx, permitId);
  return activateIfReady(tx, permit, { actorId: ownerId, now });
}

/** A permit's own limits: each must be tighter than the parcel's for the same species and scope. */
async function addPermitLimits(tx: Tx, { parcelId, permitId, isClub, limits: wanted }: { parcelId: string; permitId: string; isClub: boolean; limits: GrantPermitInput['limits'] }) {
  for (const [index, limit] of wanted.entries()) {
    const field = `limits.${index}`;
    if (limit.scope === 'club-season' && !isClub) throw invalidInput(`${field}.scope`, 'A club-wide cap belongs on a club permit.');
    const [allowance] = await tx.select({ id: allowances.id }).from(allowances).where(and(eq(allowances.parcelId, parcelId), eq(allowances.speciesId, limit.speciesId), isNull(allowances.removedAt)));
    if (!allowance) throw invalidInput(`${field}.speciesId`, 'The parcel has no allowance for that species; add one first.');
    const parcelLimits = await tx.select().from(limits).where(and(eq(limits.allowanceId, allowance.id), isNull(limits.permitId)));
    const measure = measureOf(limit.unit);
    const counted = [...new Set(parcelLimits.map((l) => measureOf(l.unit as Unit)))];
    if (counted.length > 0 && !counted.includes(measure)) {
      throw invalidInput(`${field}.unit`, `The parcel limits this species in ${counted.map(unitsOfMeasure).join(' or in ')}; use one of those units.`);
    }
    const same = parcelLimits.find((l) => l.scope === limit.scope && measureOf(l.unit as Unit) === measure);
    if (same && compareDecimals(toBase(limit.quantity, limit.unit), toBase(same.quantity, same.unit as Unit)) > 0) {
      throw invalidInput(`${field}.quantity`, `A permit may tighten the parcel's limit of ${formatLimit({ quantity: same.quantity, unit: same.unit, scope: limit.scope })}, never loosen it.`);
    }
    await tx.insert(limits).values({ allowanceId: allowance.id, permitId, scope: limit.scope, quantity: limit.quantity, unit: limit.unit });
  }
}

/** The landowner tightens one limit of a permit that has not ended. */
export async function tightenPermit(tx: Tx, { permitId, ownerId, limit }: { permitId: string; ownerId: string; limit: GrantPermitInput['limits'][number] }) {
  const permit = await lockPermit(tx, permitId);
  if (permit.ownerId !== ownerId) throw notFound('Permit');
  if (!['requested', 'approved', 'active'].includes(permit.state)) throw new AppError(409, 'permit-ended', `This permit is ${permit.state}; its limits no longer matter.`);
  const [existing] = await tx
    .select({ id: limits.id })
    .from(limits)
    .innerJoin(allowances, eq(allowances.id, limits.allowanceId))
    .where(and(eq(limits.permitId, permitId), eq(allowances.speciesId, limit.speciesId), eq(limits.scope, limit.scope), sql`unit_measure(${limits.unit}) = unit_measure(${limit.unit}::unit)`));
  if (existing) await tx.delete(limits).where(eq(limits.id, existing.id));
  await addPermitLimits(tx, { parcelId: permit.parcelId, permitId, isClub: permit.holderClubId !== null, limits: [limit] });
  return permit;
}

/** A forager (or a steward for their club) asks for access to a parcel that is open to requests. */
export async function requestAccess(
  tx: Tx,
  { parcelId, requesterId, clubId, startsOn, endsOn, note, now }: { parcelId: string; requesterId: string; clubId?: string; startsOn: string; endsOn: string; note: string; now: Date },
) {
  const [parcel] = await tx
    .select({ id: parcels.id, ownerId: parcels.ownerId, name: parcels.name })
    .from(parcels)
    .where(and(eq(parcels.id, parcelId), eq(parcels.status, 'listed'), eq(parcels.openToRequests, true)));
  if (!parcel) throw notFound('A parcel open to requests');
  if (parcel.ownerId === requesterId) throw new AppError(409, 'own-parcel', 'This is your own parcel; you need no permit for it.');
  if (clubId) {
    const [steward] = await tx
      .select({ id: clubMemberships.id })
      .from(clubMemberships)
      .where(and(eq(clubMemberships.clubId, clubId), eq(clubMemberships.userId, requesterId), eq(clubMemberships.role, 'steward'), eq(clubMemberships.state, 'active')));
    if (!steward) throw notFound('A club you steward');
  }
  const holderColumn = clubId ? permits.holderClubId : permits.holderUserId;
  const [open] = await tx
    .select({ id: permits.id, state: permits.state })
    .from(permits)
    .where(and(eq(permits.parcelId, parcelId), eq(holderColumn, clubId ?? requesterId), sql`${permits.state} in ('requested', 'approved', 'active')`));
  if (open) throw new AppError(409, 'already-asked', `There is already a permit here that is ${open.state}; see My permits.`);
  const permitId = await insertPermit(tx, { parcelId, holder: clubId ? { clubId } : { userId: requesterId }, startsOn, endsOn, feeMinor: 0, currency: 'usd', note, requestedBy: requesterId, now });
  await tx.insert(permitEvents).values({ permitId, fromState: null, toState: 'requested', actorId: requesterId, reason: note, at: now });
  return { permitId, parcel };
}

/** The landowner approves (optionally setting a fee) or declines a request. */
export async function decideRequest(
  tx: Tx,
  { permitId, ownerId, decision, message, feeMinor, now }: { permitId: string; ownerId: string; decision: 'approve' | 'decline'; message: string; feeMinor?: number; now: Date },
) {
  const permit = await lockPermit(tx, permitId);
  if (permit.ownerId !== ownerId) throw notFound('Permit');
  if (decision === 'decline') {
    return movePermit(tx, permit, { to: 'declined', by: 'landowner', actorId: ownerId, reason: message || 'Declined by the landowner.', now });
  }
  if (permit.endsOn < localDate(now, permit.timeZone)) {
    throw new AppError(409, 'dates-passed', `The dates asked for ended on ${formatDay(permit.endsOn)}; decline this request and ask the forager to send a new one.`);
  }
  if (feeMinor !== undefined) {
    await tx.update(permits).set({ feeMinor: feeMinor > 0 ? feeMinor : null, currency: feeMinor > 0 ? (permit.currency ?? 'usd') : null }).where(eq(permits.id, permitId));
  }
  const approved = await movePermit(tx, { ...permit, feeMinor: feeMinor ?? permit.feeMinor }, { to: 'approved', by: 'landowner', actorId: ownerId, reason: message || 'Approved by the landowner.', now });
  return activateIfReady(tx, approved, { actorId: ownerId, now });
}

export async function revokePermit(tx: Tx, { permitId, ownerId, reason, now }: { permitId: string; ownerId: string; reason: string; now: Date }) {
  const permit = await lockPermit(tx, permitId);
  if (permit.ownerId !== ownerId) throw notFound('Permit');
  return movePermit(tx, permit, { to: 'revoked', by: 'landowner', actorId: ownerId, reason, now });
}
