import type { Executor } from '../db/client';
import { findPaymentNotice, type PaymentNotice } from '../db/payments.queries';
import { formatDate, formatMoney } from '../lib/format';
import { mailHtml } from './mail-html';
import type { Mail } from './outbox';

/** A payment e-mail's words, made from the payment's facts. */
export type PaymentWords = (n: PaymentNotice) => { subject: string; paragraphs: string[] };

/** Whom a payment e-mail goes to (the payer unless said), the page it links to (My permits unless said), and its dedupe key. */
export type PaymentMailOptions = { to?: (n: PaymentNotice) => string; page?: (n: PaymentNotice) => { label: string; path: string }; dedupeKey?: string };

/**
 * One e-mail about a payment, to its payer unless told whom, with a link to My permits (or `page`)
 * when the origin is known. Read through `db`, the caller's transaction, so it sees the change it tells
 * of. Null for an unknown payment. Put it in the outbox in that same transaction.
 */
export async function paymentMail(db: Executor, paymentId: string, purpose: string, words: PaymentWords, origin?: string, { to, page, dedupeKey }: PaymentMailOptions = {}): Promise<Mail | null> {
  const notice = await findPaymentNotice(db, { paymentId });
  if (!notice) return null;
  const { subject, paragraphs } = words(notice);
  const link = page ? page(notice) : { label: 'Open My permits', path: '/my-permits' };
  const action = origin ? { label: link.label, url: `${origin}${link.path}` } : undefined;
  return {
    purpose,
    to: to ? to(notice) : notice.payerEmail,
    subject,
    text: `${subject}\n\n${paragraphs.join('\n\n')}\n${action ? `\n${action.label}: ${action.url}\n` : ''}`,
    html: mailHtml({ heading: subject, paragraphs, action }),
    ...(dedupeKey ? { dedupeKey } : {}),
  };
}

/** To the payer: their fee is given back. */
export const refundWords = (reason: string): PaymentWords => (n) => ({
  subject: `Refund: ${formatMoney(n.amountMinor, n.currency)} for your permit at ${n.parcelName}`,
  paragraphs: [
    `The ${formatMoney(n.amountMinor, n.currency)} you paid for your access permit at ${n.parcelName} has been refunded to the card or account you paid with. It can take a few days to show.`,
    `Reason: ${reason}`,
    `Payment reference: ${n.paymentId}.`,
  ],
});

/** To the landowner: every automatic try to give a fee back failed, so a person must do it. */
export const refundFailedWords: PaymentWords = (n) => {
  const payer = n.payerName ?? n.payerEmail;
  const amount = formatMoney(n.amountMinor, n.currency);
  return {
    subject: `Refund failed: ${amount} to ${n.clubName ?? payer} for ${n.parcelName} needs a refund by hand`,
    paragraphs: [
      `${n.clubName ? `${n.clubName} (paid by ${payer})` : payer} paid ${amount} for an access permit at ${n.parcelName}, ${formatDate(n.startsOn)} – ${formatDate(n.endsOn)}. That fee was due back, but the payment service refused to refund it each time Tallywood tried, over several hours, and Tallywood has stopped trying.`,
      `Please refund the ${amount} by hand through the payment service, to ${payer} (${n.payerEmail}), quoting payment reference ${n.paymentId}.`,
      'Until then the permit shows "refund failed — refund by hand" on the parcel\'s Permits page.',
    ],
  };
};
