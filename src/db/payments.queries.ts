import { and, desc, eq, gt, inArray, isNull, or, sql, type SQL } from 'drizzle-orm';
import type { Executor, Tx } from './client';
import { auditEvents, clubMemberships, parcels, paymentEvents, payments, permits, users, type Payment } from './schema';

/** The payer's standing in a club: 'steward', 'member', or null when not an active member. */
export async function findClubRole(db: Executor, { userId, clubId }: { userId: string; clubId: string }) {
  const [row] = await db
    .select({ role: clubMemberships.role })
    .from(clubMemberships)
    .where(and(eq(clubMemberships.userId, userId), eq(clubMemberships.clubId, clubId), eq(clubMemberships.state, 'active')));
  return row?.role ?? null;
}

/** The checkout still waiting for payment on a permit, if any (newest first; normally there is at most one). */
export async function findPendingPayment(db: Executor, { permitId }: { permitId: string }) {
  const [row] = await db
    .select()
    .from(payments)
    .where(and(eq(payments.permitId, permitId), eq(payments.state, 'pending')))
    .orderBy(desc(payments.createdAt))
    .limit(1);
  return row ?? null;
}

export async function insertPayment(db: Executor, values: typeof payments.$inferInsert) {
  const [row] = await db.insert(payments).values(values).returning();
  if (!row) throw new Error('the payment was not recorded');
  return row;
}

/** A checkout that ended unpaid. Only a pending payment moves; a paid one stays paid. */
export async function markPaymentCancelled(db: Executor, { paymentId }: { paymentId: string }) {
  await db.update(payments).set({ state: 'cancelled' }).where(and(eq(payments.id, paymentId), eq(payments.state, 'pending')));
}

/**
 * Records a provider event once. Returns false when it was already recorded, so the caller does nothing
 * twice; a concurrent copy waits on the primary key until the first transaction ends.
 */
export async function recordPaymentEvent(db: Executor, event: { providerEventId: string; type: string; payload: unknown; receivedAt: Date }) {
  const inserted = await db.insert(paymentEvents).values(event).onConflictDoNothing({ target: paymentEvents.providerEventId }).returning({ id: paymentEvents.providerEventId });
  return inserted.length > 0;
}

/** Locks the payment behind a provider checkout session for the rest of the transaction. */
export async function lockPaymentBySession(tx: Tx, { sessionId }: { sessionId: string }): Promise<Payment | null> {
  const [row] = await tx.select().from(payments).where(eq(payments.providerSessionId, sessionId)).for('update');
  return row ?? null;
}

export async function markPaymentPaid(db: Executor, { paymentId, providerPaymentId, paidAt }: { paymentId: string; providerPaymentId: string | null; paidAt: Date }) {
  await db.update(payments).set({ state: 'paid', providerPaymentId, paidAt }).where(eq(payments.id, paymentId));
}

/** Locks the newest settled payment of a permit, the one a refund gives back. */
export async function lockPaidPayment(tx: Tx, { permitId }: { permitId: string }): Promise<Payment | null> {
  const [row] = await tx
    .select()
    .from(payments)
    .where(and(eq(payments.permitId, permitId), eq(payments.state, 'paid')))
    .orderBy(desc(payments.paidAt))
    .limit(1)
    .for('update');
  return row ?? null;
}

export async function lockPayment(tx: Tx, { paymentId }: { paymentId: string }): Promise<Payment | null> {
  const [row] = await tx.select().from(payments).where(eq(payments.id, paymentId)).for('update');
  return row ?? null;
}

/** Marks a paid payment as one every automatic refund failed for, so a person refunds it by hand; true the first time. */
export async function markRefundFailed(db: Executor, { paymentId, at }: { paymentId: string; at: Date }) {
  const marked = await db
    .update(payments)
    .set({ refundFailedAt: at })
    .where(and(eq(payments.id, paymentId), eq(payments.state, 'paid'), isNull(payments.refundFailedAt)))
    .returning({ id: payments.id });
  return marked.length > 0;
}

/** Marks a payment refunded and records who refunded it and why on the permit's audit trail. */
export async function recordRefund(db: Executor, { payment, actorId, reason, refundedAt }: { payment: Payment; actorId: string | null; reason: string; refundedAt: Date }) {
  await db.update(payments).set({ state: 'refunded', refundedAt, refundFailedAt: null }).where(eq(payments.id, payment.id));
  await db.insert(auditEvents).values({
    actorId, action: 'permit.fee-refunded', subjectType: 'permit', subjectId: payment.permitId,
    detail: { paymentId: payment.id, amountMinor: payment.amountMinor, currency: payment.currency, reason }, at: refundedAt,
  });
}

/** What an e-mail about a payment needs: who paid, for which parcel, how much, and where the permit stands. */
export async function findPaymentNotice(db: Executor, { paymentId }: { paymentId: string }) {
  const [row] = await db
    .select({
      paymentId: payments.id,
      amountMinor: payments.amountMinor,
      currency: payments.currency,
      payerEmail: users.email,
      payerName: users.name,
      permitId: permits.id,
      permitState: permits.state,
      startsOn: permits.startsOn,
      endsOn: permits.endsOn,
      parcelName: parcels.name,
      parcelId: parcels.id,
      ownerEmail: sql<string>`(select u.email from users u where u.id = ${parcels.ownerId})`,
      clubName: sql<string | null>`(select c.name from clubs c where c.id = ${permits.holderClubId})`,
    })
    .from(payments)
    .innerJoin(users, eq(users.id, payments.payerId))
    .innerJoin(permits, eq(permits.id, payments.permitId))
    .innerJoin(parcels, eq(parcels.id, permits.parcelId))
    .where(eq(payments.id, paymentId));
  return row ?? null;
}

export type PaymentNotice = NonNullable<Awaited<ReturnType<typeof findPaymentNotice>>>;

/** One of the payer's own checkouts and the permit's state now, for the page a checkout returns to. */
export async function findCheckoutForPayer(db: Executor, { sessionId, payerId }: { sessionId: string; payerId: string }) {
  const [row] = await db
    .select({
      paymentState: payments.state,
      amountMinor: payments.amountMinor,
      currency: payments.currency,
      permitId: permits.id,
      permitState: permits.state,
      feePaidAt: permits.feePaidAt,
      termsAcceptedAt: permits.termsAcceptedAt,
      startsOn: permits.startsOn,
      parcelName: parcels.name,
    })
    .from(payments)
    .innerJoin(permits, eq(permits.id, payments.permitId))
    .innerJoin(parcels, eq(parcels.id, permits.parcelId))
    .where(and(eq(payments.providerSessionId, sessionId), eq(payments.payerId, payerId)));
  return row ?? null;
}

/**
 * Approved or active permits with a fee still to pay that this person may pay: those they hold, and
 * club permits of clubs they steward. `permitId` narrows the list to one permit.
 */
export async function listFeesDue(db: Executor, { userId, stewardOfClubIds, permitId }: { userId: string; stewardOfClubIds: string[]; permitId?: string }) {
  const payable: SQL[] = [eq(permits.holderUserId, userId)];
  if (stewardOfClubIds.length > 0) payable.push(inArray(permits.holderClubId, stewardOfClubIds));
  return db
    .select({
      permitId: permits.id,
      parcelName: parcels.name,
      state: permits.state,
      startsOn: permits.startsOn,
      endsOn: permits.endsOn,
      feeMinor: sql<number>`${permits.feeMinor}`,
      currency: sql<string>`${permits.currency}`,
      heldByClub: sql<boolean>`${permits.holderClubId} is not null`,
    })
    .from(permits)
    .innerJoin(parcels, eq(parcels.id, permits.parcelId))
    .where(
      and(
        or(...payable),
        inArray(permits.state, ['approved', 'active']),
        gt(permits.feeMinor, 0),
        isNull(permits.feePaidAt),
        permitId ? eq(permits.id, permitId) : undefined,
      ),
    )
    .orderBy(permits.startsOn);
}
