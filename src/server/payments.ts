import { randomUUID } from 'node:crypto';
import { MAIL_FROM, STRIPE_API_URL, STRIPE_SECRET_KEY, STRIPE_WEBHOOK_SECRET } from 'astro:env/server';
import Stripe from 'stripe';
import { db, type Executor, type Tx } from '../db';
import {
  findClubRole, findPendingPayment, insertPayment, lockPaidPayment, lockPayment, lockPaymentBySession,
  markPaymentCancelled, markPaymentPaid, recordPaymentEvent, recordRefund,
} from '../db/payments.queries';
import { lockPermit, recordFeePaid, type LockedPermit } from '../db/permits.lifecycle';
import type { Payment } from '../db/schema';
import { AppError, conflict, forbidden, notFound } from '../lib/errors';
import { formatDate, formatMoney } from '../lib/format';
import { queueRefund, refundAtProvider, useRefunder } from './jobs/refund-payment';
import { sendMail } from './mail';
import { log } from './log';
import { paymentMail, refundWords, type PaymentMailOptions, type PaymentWords } from './payment-mails';

/** The provider's SDK, pointed at STRIPE_API_URL: the local fake by default, `https://api.stripe.com` for real money. */
export const stripe = createStripeClient(STRIPE_API_URL, STRIPE_SECRET_KEY);

function createStripeClient(apiUrl: string, secretKey: string) {
  const api = new URL(apiUrl);
  const protocol = api.protocol === 'http:' ? 'http' : 'https';
  if (protocol === 'http' && !secretKey.startsWith('sk_test_')) {
    throw new Error(`STRIPE_API_URL ${apiUrl} is plain HTTP; only a test key (sk_test_…) may be sent there.`);
  }
  const port = Number(api.port || (protocol === 'http' ? 80 : 443));
  // The local fake and its published keys are allowed in local mode only: src/server/deployment.ts
  // refuses to start a server that would take them anywhere else.
  return new Stripe(secretKey, { host: api.hostname, port, protocol, maxNetworkRetries: 2, timeout: 20_000 });
}

/** The `refund-payment` job refunds through this client and mails from MAIL_FROM (src/server/startup.ts). */
export function useAppRefunder() {
  useRefunder({ stripe, mailFrom: MAIL_FROM });
}

/** Calls the provider; its failures become an error a person can act on. Nothing in our database has changed yet. */
async function provider<T>(call: () => Promise<T>): Promise<T> {
  try {
    return await call();
  } catch (error) {
    throwProviderError(error);
  }
}

function throwProviderError(error: unknown): never {
  if (!(error instanceof Stripe.errors.StripeError)) throw error;
  log.error({ type: error.type, message: error.message }, 'payment provider error');
  throw new AppError(502, 'payments-unavailable', 'The payment service did not accept the request just now; nothing was charged or refunded. Try again in a minute.');
}

/**
 * Opens the provider's hosted checkout for a permit's fee and answers where to send the payer. The holder
 * pays a personal permit; an active steward of the holding club pays a club permit. A checkout the same
 * payer left open is reused, so two tabs never make two payments.
 */
export async function startCheckout({ permitId, payer, origin }: { permitId: string; payer: { id: string; email: string }; origin: string }): Promise<{ url: string }> {
  return db.transaction(async (tx) => {
    const permit = await lockPermit(tx, permitId);
    await assertMayPay(tx, permit, payer.id);
    const fee = permit.feeMinor ?? 0;
    if (permit.state !== 'approved' && permit.state !== 'active') throw conflict(undefined, `A fee can be paid once the permit is approved; this one is ${permit.state}.`);
    if (fee <= 0 || !permit.currency) throw conflict(undefined, 'This permit has no fee to pay.');
    if (permit.feePaidAt) throw conflict(undefined, 'The fee for this permit is already paid.');

    const reusable = await reuseOpenCheckout(tx, { permitId, payerId: payer.id, amountMinor: fee });
    if (reusable) return { url: reusable };

    const paymentId = randomUUID();
    const currency = permit.currency;
    const session = await provider(() =>
      stripe.checkout.sessions.create(
        {
          mode: 'payment',
          line_items: [{ quantity: 1, price_data: { currency, unit_amount: fee, product_data: { name: `Access permit — ${permit.parcelName}` } } }],
          success_url: `${origin}/payments/done?session_id={CHECKOUT_SESSION_ID}`,
          cancel_url: `${origin}/payments/cancelled?permit=${permitId}`,
          client_reference_id: permitId,
          customer_email: payer.email,
          metadata: { permitId, paymentId },
        },
        { idempotencyKey: `checkout-${paymentId}` },
      ),
    );
    if (!session.url) throw new Error(`checkout session ${session.id} came back without a url`);
    await insertPayment(tx, { id: paymentId, permitId, payerId: payer.id, providerSessionId: session.id, amountMinor: fee, currency, state: 'pending' });
    return { url: session.url };
  });
}

/** Someone else's permit is answered as not found; a club member who is not a steward is told who pays. */
async function assertMayPay(tx: Tx, permit: LockedPermit, payerId: string) {
  if (permit.holderUserId === payerId) return;
  const role = permit.holderClubId ? await findClubRole(tx, { userId: payerId, clubId: permit.holderClubId }) : null;
  if (role === 'steward') return;
  if (role === 'member') throw forbidden("A club permit's fee is paid by one of the club's stewards.");
  throw notFound('Permit');
}

/** The url of the payer's own open checkout for this amount; any other open checkout is closed, so only one can be paid. */
async function reuseOpenCheckout(tx: Tx, { permitId, payerId, amountMinor }: { permitId: string; payerId: string; amountMinor: number }) {
  const pending = await findPendingPayment(tx, { permitId });
  if (!pending?.providerSessionId) return null;
  const sessionId = pending.providerSessionId;
  const session = await provider(() => stripe.checkout.sessions.retrieve(sessionId));
  if (session.status === 'complete') throw conflict(undefined, 'A payment for this permit has just gone through and is being confirmed; look at My permits in a moment.');
  if (session.status === 'open' && session.url && pending.payerId === payerId && pending.amountMinor === amountMinor) return session.url;
  if (session.status === 'open') await provider(() => stripe.checkout.sessions.expire(sessionId));
  await markPaymentCancelled(tx, { paymentId: pending.id });
  return null;
}

/** What a settled checkout leads to: a receipt (mailed in the webhook's transaction) or a refund (made once it has committed). */
type FollowUp = { kind: 'receipt' | 'refund'; paymentId: string; origin?: string } | null;

/**
 * Handles one provider webhook. The event is recorded in the same transaction as its effect, so a
 * replayed or concurrent copy changes nothing and answers `duplicate: true`. Unknown types are recorded and ignored.
 */
export async function handleWebhook(rawBody: string, signature: string | null, now: Date): Promise<{ received: true; duplicate?: true }> {
  const event = verifiedEvent(rawBody, signature);
  const followUp = await db.transaction(async (tx): Promise<FollowUp | 'duplicate'> => {
    const fresh = await recordPaymentEvent(tx, { providerEventId: event.id, type: event.type, payload: event, receivedAt: now });
    if (!fresh) return 'duplicate';
    switch (event.type) {
      case 'checkout.session.completed':
      case 'checkout.session.async_payment_succeeded': {
        const settled = await settleCheckout(tx, event.data.object, now);
        // The receipt and the landowner's notice are written with the payment: they go exactly when it is recorded paid.
        if (settled?.kind === 'receipt') {
          await mailReceipt(tx, settled.paymentId, settled.origin);
          await mailFeePaidToLandowner(tx, settled.paymentId, settled.origin);
        }
        return settled;
      }
      case 'checkout.session.expired': {
        const payment = await lockPaymentBySession(tx, { sessionId: event.data.object.id });
        if (payment) await markPaymentCancelled(tx, { paymentId: payment.id });
        return null;
      }
      default:
        return null;
    }
  });
  if (followUp === 'duplicate') return { received: true, duplicate: true };
  if (followUp?.kind === 'refund') await refundLatePayment(followUp, now);
  return { received: true };
}

function verifiedEvent(rawBody: string, signature: string | null): Stripe.Event {
  try {
    return stripe.webhooks.constructEvent(rawBody, signature ?? '', STRIPE_WEBHOOK_SECRET);
  } catch {
    throw new AppError(400, 'bad-signature', 'The Stripe-Signature header is missing or does not match this body; the event was ignored.');
  }
}

/** A paid checkout settles the permit's fee, or, when the permit no longer takes one, is refunded. */
async function settleCheckout(tx: Tx, session: Stripe.Checkout.Session, now: Date): Promise<FollowUp> {
  if (session.payment_status !== 'paid') return null;
  const payment = await lockPaymentBySession(tx, { sessionId: session.id });
  if (!payment || payment.state === 'paid' || payment.state === 'refunded') return null;
  const mismatch = checkoutMismatch(session, payment);
  if (mismatch) {
    // Signed by the provider yet not what we asked for: nothing is settled, and staff must look.
    log.error({ paymentId: payment.id, checkoutId: session.id, mismatch }, 'checkout was not settled');
    return null;
  }
  const intent = typeof session.payment_intent === 'string' ? session.payment_intent : (session.payment_intent?.id ?? null);
  await markPaymentPaid(tx, { paymentId: payment.id, providerPaymentId: intent, paidAt: now });
  // The success page is ours, so its origin is where the payer reached Tallywood: links in the e-mail go there.
  const origin = session.success_url ? new URL(session.success_url).origin : undefined;
  const permit = await lockPermit(tx, payment.permitId);
  if ((permit.state !== 'approved' && permit.state !== 'active') || permit.feePaidAt) return { kind: 'refund', paymentId: payment.id, origin };
  await recordFeePaid(tx, { permitId: permit.id, paidAt: now, actorId: payment.payerId });
  return { kind: 'receipt', paymentId: payment.id, origin };
}

/**
 * Why a completed checkout does not settle the payment row it names, or null when it does: the row
 * this checkout was opened for (our payment id in its metadata), for the amount and currency the
 * row records.
 */
export function checkoutMismatch(
  session: Pick<Stripe.Checkout.Session, 'amount_total' | 'currency' | 'metadata'>,
  payment: { id: string; amountMinor: number; currency: string },
): string | null {
  if (session.metadata?.paymentId !== payment.id) return `it names payment ${session.metadata?.paymentId ?? '(none)'}`;
  if (session.amount_total !== payment.amountMinor) return `it paid ${session.amount_total ?? '(no amount)'} minor units, not ${payment.amountMinor}`;
  if ((session.currency ?? '').toLowerCase() !== payment.currency.toLowerCase()) return `it paid in ${session.currency ?? '(no currency)'}, not ${payment.currency}`;
  return null;
}

/** A payment that came too late is refunded at once; when the provider refuses, the `refund-payment` job tries again. */
async function refundLatePayment({ paymentId, origin }: { paymentId: string; origin?: string }, now: Date) {
  const reason = 'The payment arrived after the permit had stopped taking a fee (it was paid already, revoked or ended).';
  try {
    await db.transaction(async (tx) => {
      const payment = await lockPayment(tx, { paymentId });
      const refunded = payment?.state === 'paid' ? await refundLocked(tx, payment, { actorId: null, reason, now }) : null;
      if (refunded?.outcome === 'refunded') await mailRefund(tx, paymentId, reason, origin);
    });
  } catch (error) {
    log.warn({ err: error, paymentId }, 'refund of a late payment failed; the refund job will try again');
    await retryRefundLater({ paymentId, reason, actorId: null, origin });
  }
}

/** Hands a refund the provider refused to the `refund-payment` job; only if even that fails is it left to a person, in the log. */
export async function retryRefundLater(data: { paymentId: string; reason: string; actorId: string | null; origin?: string }) {
  try {
    // Null when a job for this payment is already waiting, running or just done (its id is the payment's).
    if (!(await queueRefund(data))) log.warn({ paymentId: data.paymentId }, 'a refund job for this payment exists already; not queued again');
  } catch (error) {
    log.error({ err: error, paymentId: data.paymentId }, 'payment needs a refund by hand');
  }
}

export type RefundOutcome =
  | { outcome: 'refunded'; paymentId: string; amountMinor: number; currency: string }
  | { outcome: 'nothing-paid' }
  /** Settled without the provider (such as the demo data): there is nothing to refund through it. */
  | { outcome: 'paid-outside-checkout'; paymentId: string };

/**
 * Gives back a permit's settled fee through the provider, marks the payment refunded and e-mails the payer.
 * Pass `db` or an open transaction. The refund is idempotent per payment, so a retry never refunds twice;
 * the e-mail goes once the provider has refunded, since the money has moved whatever the caller does next.
 * `origin` adds a link to My permits to the e-mail.
 */
export async function refundPermitFee(
  executor: Executor,
  { permitId, actorId, reason, origin, now = new Date() }: { permitId: string; actorId: string | null; reason: string; origin?: string; now?: Date },
): Promise<RefundOutcome> {
  return executor.transaction(async (tx): Promise<RefundOutcome> => {
    const payment = await lockPaidPayment(tx, { permitId });
    const outcome: RefundOutcome = payment ? await refundLocked(tx, payment, { actorId, reason, now }) : { outcome: 'nothing-paid' };
    if (outcome.outcome === 'refunded') await mailRefund(tx, outcome.paymentId, reason, origin);
    return outcome;
  });
}

async function refundLocked(tx: Tx, payment: Payment, { actorId, reason, now }: { actorId: string | null; reason: string; now: Date }): Promise<RefundOutcome> {
  if (!payment.providerPaymentId) return { outcome: 'paid-outside-checkout', paymentId: payment.id };
  await refundAtProvider(stripe, payment).catch(throwProviderError);
  await recordRefund(tx, { payment, actorId, reason, refundedAt: now });
  return { outcome: 'refunded', paymentId: payment.id, amountMinor: payment.amountMinor, currency: payment.currency };
}

/**
 * Puts one e-mail about a payment in the outbox, to its payer unless told whom, in `tx`, the transaction
 * of the payment's change: the mail exists exactly when the change does.
 */
async function mailPayer(tx: Tx, paymentId: string, purpose: string, words: PaymentWords, origin?: string, options: Omit<PaymentMailOptions, 'dedupeKey'> = {}) {
  const mail = await paymentMail(tx, paymentId, purpose, words, origin, options);
  if (mail) await sendMail(mail, tx);
}

function mailReceipt(tx: Tx, paymentId: string, origin?: string) {
  return mailPayer(tx, paymentId, 'receipt', (n) => ({
    subject: `Receipt: ${formatMoney(n.amountMinor, n.currency)} for your permit at ${n.parcelName}`,
    paragraphs: [
      `We received ${formatMoney(n.amountMinor, n.currency)} for your access permit at ${n.parcelName}, ${formatDate(n.startsOn)} – ${formatDate(n.endsOn)}.`,
      n.permitState === 'active'
        ? 'Your permit is active.'
        : "Your permit is active once the parcel's terms are accepted and its first day has come.",
      `Payment reference: ${n.paymentId}. Keep this e-mail as your receipt.`,
    ],
  }), origin);
}

/** The landowner is told a fee came in: who paid, how much, for which permit. */
function mailFeePaidToLandowner(tx: Tx, paymentId: string, origin?: string) {
  return mailPayer(tx, paymentId, 'fee-paid', (n) => {
    const payer = n.payerName ?? n.payerEmail;
    const holder = n.clubName ? `${n.clubName} (paid by ${payer})` : payer;
    return {
      subject: `Fee paid: ${formatMoney(n.amountMinor, n.currency)} from ${n.clubName ?? payer} for ${n.parcelName}`,
      paragraphs: [
        `${holder} paid the ${formatMoney(n.amountMinor, n.currency)} fee for their access permit at ${n.parcelName}, ${formatDate(n.startsOn)} – ${formatDate(n.endsOn)}.`,
        n.permitState === 'active' ? 'The permit is now active.' : 'The permit becomes active once the terms are accepted and its first day has come.',
        `Payment reference: ${n.paymentId}.`,
      ],
    };
  }, origin, { to: (n) => n.ownerEmail, page: (n) => ({ label: 'Open the parcel', path: `/land/${n.parcelId}` }) });
}

function mailRefund(tx: Tx, paymentId: string, reason: string, origin?: string) {
  return mailPayer(tx, paymentId, 'refund', refundWords(reason), origin);
}
