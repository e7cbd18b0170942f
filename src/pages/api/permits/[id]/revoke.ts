import { db } from '../../../../db';
import { findPermitForOwner } from '../../../../db/permits.queries';
import { revokePermit } from '../../../../db/permits.commands';
import { notFound } from '../../../../lib/errors';
import { localDate } from '../../../../lib/local-time';
import { revokeSchema } from '../../../../lib/permits.schemas';
import { endpoint, guard, idParam, json, readJson } from '../../../../server/http';
import { noticeRevoked } from '../../../../server/notices';
import { refundPermitFee } from '../../../../server/payments';

/** Revokes a permit with a reason. A paid permit revoked before its first day is refunded. */
export const POST = endpoint(async ({ locals, params, request, url }) => {
  const actor = guard(locals.actor, 'parcel:list-own');
  const permitId = idParam(params.id, 'Permit');
  const existing = await findPermitForOwner(db, { permitId, ownerId: actor.id });
  if (!existing) throw notFound('Permit');
  guard(actor, 'permit:grant', { ownerId: actor.id });
  const { reason } = await readJson(request, revokeSchema);
  const now = new Date();
  const permit = await db.transaction((tx) => revokePermit(tx, { permitId, ownerId: actor.id, reason, now }));
  const beforeStart = Boolean(existing.feePaidAt) && existing.startsOn > localDate(now, existing.timeZone);
  // The revocation stands whatever the provider says; a refund that fails is reported, not hidden.
  const refund = beforeStart
    ? await refundPermitFee(db, { permitId, actorId: actor.id, reason, origin: url.origin, now }).catch((error) => {
        locals.log.error({ err: error, permitId }, 'refund after revocation failed');
        return { outcome: 'failed' as const };
      })
    : null;
  const refunded = refund?.outcome === 'refunded';
  await noticeRevoked({ permitId, origin: url.origin, reason, refunded });
  return json({ permit: { id: permit.id, state: permit.state }, refunded, refund: refund?.outcome ?? 'not-due' });
});
