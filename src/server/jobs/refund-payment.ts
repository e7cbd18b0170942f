import Stripe from 'stripe';
import type { Db, Executor } from '../../db/client';
import { lockPayment, markRefundFailed, recordRefund } from '../../db/payments.queries';
import type { Payment } from '../../db/schema';
import type { Log } from '../log';
import { queueMail } from '../outbox';
import { paymentMail, refundFailedWords, refundWords } from '../payment-mails';
import { defineJob, type JobAttempt } from './registry';

/**
 * A paid fee that is due back and that the provider would not refund when asked (src/server/payments.ts)
 * is refunded by this job, tried again with backoff. Each try asks under an idempotency key of its own
 * (`refund-<payment>-try-<n>`): a provider keeps the answer it gave to a key, errors included, for a day,
 * so a key shared by every try would replay the first refusal. A refund the provider made but whose
 * answer was lost is not made twice: the next try is refused as a charge already refunded in full,
 * which counts as done. The payment row is
 * locked while the provider is asked, so two runs for one payment refund it once. When the last try
 * fails, the payment is marked `refund_failed_at` and its landowner mailed, in one transaction, to
 * refund it by hand.
 */

export type RefundJobData = { paymentId: string; reason: string; actorId: string | null; origin?: string };

/** pg-boss tries a refusal again up to 8 times, a minute after the first and twice as long each time after (several hours in all). */
export const refundPaymentQueue = { retryLimit: 8, retryDelay: 60, retryBackoff: true };

/** What the job needs from the app: the provider's client and the From address of its mail (set at startup, by a test here). */
export type Refunder = { stripe: Stripe; mailFrom: string };

let refunder: Refunder | null = null;

/** The app's provider client and mail address (src/server/payments.ts, useAppRefunder, at startup). */
export function useRefunder(next: Refunder) {
  refunder = next;
}

/**
 * Asks the provider to give back a payment in full: inline under `refund-<payment>`, from the job under
 * that and the try's number, so a retry is a new request rather than a replay of the refusal.
 */
export async function refundAtProvider(stripe: Stripe, payment: Pick<Payment, 'id' | 'permitId' | 'providerPaymentId'>, jobTry?: number) {
  if (!payment.providerPaymentId) throw new Error(`payment ${payment.id} was not made through the provider`);
  const idempotencyKey = jobTry === undefined ? `refund-${payment.id}` : `refund-${payment.id}-try-${jobTry}`;
  try {
    await stripe.refunds.create({ payment_intent: payment.providerPaymentId, metadata: { permitId: payment.permitId, paymentId: payment.id } }, { idempotencyKey });
  } catch (error) {
    // A refund made under another key (an earlier try whose answer was lost): the charge is back with its payer, the goal.
    const alreadyRefunded = error instanceof Stripe.errors.StripeError && error.code === 'charge_already_refunded';
    if (!alreadyRefunded) throw error;
  }
}

/** Queues the refund of one payment; at most one job per payment is waiting or running, as its id is the payment's. */
export async function queueRefund(data: RefundJobData, { tx }: { tx?: Executor } = {}) {
  const { sendJob } = await import('./queue');
  return sendJob('refund-payment', data, { id: data.paymentId, ...(tx ? { tx } : {}) });
}

export type RefundTry = 'refunded' | 'nothing-due' | 'retrying' | 'failed';

/**
 * One try. A payment no longer 'paid' (refunded already) or settled outside the provider is left alone.
 * A refusal is thrown (after the mark and mail, on the `last` try) so pg-boss retries or fails the job.
 */
export async function tryRefund(db: Db, { data, now, attempt, refunder: { stripe, mailFrom }, log }: { data: RefundJobData; now: Date; attempt: JobAttempt; refunder: Refunder; log: Log }): Promise<RefundTry> {
  let failure: unknown = null;
  const outcome = await db.transaction(async (tx): Promise<RefundTry> => {
    const payment = await lockPayment(tx, { paymentId: data.paymentId });
    if (!payment || payment.state !== 'paid' || !payment.providerPaymentId) return 'nothing-due';
    try {
      await refundAtProvider(stripe, payment, attempt.number);
    } catch (error) {
      failure = error;
      if (!attempt.last) return 'retrying';
      // Marked once; the mail's dedupe key holds it to one should the job be run again.
      if (await markRefundFailed(tx, { paymentId: payment.id, at: now })) {
        const mail = await paymentMail(tx, payment.id, 'refund-failed', refundFailedWords, data.origin, {
          to: (n) => n.ownerEmail, page: (n) => ({ label: 'Open the parcel\'s permits', path: `/land/${n.parcelId}/permits` }), dedupeKey: `refund-failed:${payment.id}`,
        });
        if (mail) await queueMail(tx, mail, { from: mailFrom, log });
      }
      return 'failed';
    }
    await recordRefund(tx, { payment, actorId: data.actorId, reason: data.reason, refundedAt: now });
    const mail = await paymentMail(tx, payment.id, 'refund', refundWords(data.reason), data.origin);
    if (mail) await queueMail(tx, mail, { from: mailFrom, log });
    return 'refunded';
  });
  log.info({ paymentId: data.paymentId, outcome }, 'refund: try');
  if (failure !== null) throw failure;
  return outcome;
}

export const refundPaymentJob = defineJob<RefundJobData>({
  name: 'refund-payment',
  queue: refundPaymentQueue,
  async run({ db, now, data, attempt, log }) {
    if (!refunder) throw new Error('no payment provider is set (useRefunder)');
    await tryRefund(db, { data, now, attempt, refunder, log });
  },
});
