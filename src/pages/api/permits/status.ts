import { db } from '../../../db';
import { findPermitStanding } from '../../../db/permit-cards.queries';
import { AppError, invalidInput, notFound } from '../../../lib/errors';
import { localDate } from '../../../lib/local-time';
import { permitStanding } from '../../../lib/permit-states';
import { verifyFailureWords, verifyPermitStatement } from '../../../lib/permit-statement';
import { endpoint, json } from '../../../server/http';
import { publishedPermitKeys } from '../../../server/permit-signer';

/**
 * Whether the permit on a card is still active, for anyone holding the card's signed statement (no
 * sign-in: a warden asks). Only a statement Tallywood signed is looked up, so ids cannot be tried one
 * by one, and the answer says no more than the card: the state and its day on the parcel's calendar.
 * It reads one permit and writes nothing.
 */
export const GET = endpoint(async ({ url }) => {
  const token = url.searchParams.get('token') ?? '';
  if (!token) throw invalidInput('token', 'Give the code from the permit card as ?token=.');
  const verified = await verifyPermitStatement(token, await publishedPermitKeys());
  if (!verified.ok) throw new AppError(400, 'not-signed', verifyFailureWords[verified.reason], 'token');
  const permit = await findPermitStanding(db, { permitId: verified.statement.permit });
  if (!permit) throw notFound('The permit on this card');
  const today = localDate(new Date(), permit.timeZone);
  const standing = permitStanding({ state: permit.state, endsOn: permit.endsOn, revokedOn: permit.revokedAt ? localDate(permit.revokedAt, permit.timeZone) : null }, today);
  return json({ permit: verified.statement.permit, ...standing, today }, 200, { 'cache-control': 'no-store' });
});
