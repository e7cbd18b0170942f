import { db } from '../../../../db';
import { lockPaidPayment } from '../../../../db/payments.queries';
import { findPermitForOwner } from '../../../../db/permits.queries';
import { revokePermit } from '../../../../db/permits.commands';
import { notFound } from '../../../../lib/errors';
import { localDate } from '../../../../lib/local-time';
import { revokeSchema } from '../../../../lib/permits.schemas';
import { endpoint, guard, idParam, json, readJson } from '../../../../server/http';
import { noticeRevoked } from '../../../../server/notices';
import { refundPermitFee, retryRefundLater } from '../../../../server/payments';

/** Revokes a permit with a reason. A paid permit revoked before its first day is refunded. */
export const POST = endpoint(async ({ locals, params, request, url }) => {
  const actor = guard(locals.actor, 'parcel:list-own');
  const permitId = idParam(params.id, 'Permit');
  const existing = await findPermitForOwner(db, { permitId, ownerId: actor.id });
  if (!existing) throw notFound('Permit');
  guard(actor, 'permit:grant', { ownerId: actor.id });
  const { reason } = await readJson(request, revokeSchema);
  const now = new Date();
  const beforeStart = Boolean(existing.feePaidAt) && existing.startsOn > localDate(now, existing.timeZone);
  // The holder's e-mail is written with the revocation; the refund, which needs the provider, follows its commit.
  const { permit, paid } = await db.transaction(async (tx) => {
    const revoked = await revokePermit(tx, { permitId, ownerId: actor.id, reason, now });
    // A fee settled outside the provider's checkout (the demo's) has nothing to give back through it.
    const payment = beforeStart ? await lockPaidPayment(tx, { permitId }) : null;
    await noticeRevoked(tx, { permitId, origin: url.origin, reason, refundDue: Boolean(payment?.providerPaymentId) });
    return { permit: revoked, paid: payment };
  });
  // The revocation stands whatever the provider says; a refund that fails is reported, and the refund job tries it again.
  const refund = beforeStart
    ? await refundPermitFee(db, { permitId, actorId: actor.id, reason, origin: url.origin, now }).catch(async (error: unknown) => {
        locals.log.warn({ err: error, permitId }, 'refund after revocation failed; the refund job will try again');
        if (paid?.providerPaymentId) await retryRefundLater({ paymentId: paid.id, reason, actorId: actor.id, origin: url.origin });
        return { outcome: 'failed' as const };
      })
    : null;
  const refunded = refund?.outcome === 'refunded';
  return json({ permit: { id: permit.id, state: permit.state }, refunded, refund: refund?.outcome ?? 'not-due' });
});
