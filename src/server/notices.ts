import type { Tx } from '../db/client';
import { permitContacts } from '../db/permits.queries';
import { formatMoney } from '../lib/format';
import { limitChangeLine, tightenedLimits, type NamedLimit } from '../lib/limit-changes';
import { mailHtml, sendMail } from './mail';

/**
 * The e-mails about permits: a request to the landowner, the decision to the requester, an
 * invitation, a revocation, tighter limits. Each has a plain-text and an HTML part and a link back to
 * its page. Each is put in the outbox (src/server/outbox.ts) in `tx`, the transaction of the change it
 * reports, so the mail exists exactly when the change does: a mail that cannot be recorded undoes it.
 */
async function send(tx: Tx, to: string[], purpose: string, subject: string, heading: string, paragraphs: string[], action: { label: string; url: string }) {
  for (const address of to) {
    await sendMail({ purpose, to: address, subject, text: `${heading}\n\n${paragraphs.join('\n\n')}\n\n${action.label}: ${action.url}\n`, html: mailHtml({ heading, paragraphs, action }) }, tx);
  }
}

export async function noticeAccessRequested(tx: Tx, { permitId, origin, note }: { permitId: string; origin: string; note: string }) {
  const c = await permitContacts(tx, { permitId });
  if (!c) return;
  await send(tx, [c.ownerEmail], 'access-request', `Access request for ${c.parcelName}`, `${c.holderName ?? 'A forager'} asks for access to ${c.parcelName}`,
    [`Their note: "${note}"`, 'Approve or decline it in Tallywood; they are told either way.'],
    { label: 'Review the request', url: `${origin}/requests/${permitId}` });
}

export async function noticeDecision(tx: Tx, { permitId, origin, approved, message }: { permitId: string; origin: string; approved: boolean; message: string }) {
  const c = await permitContacts(tx, { permitId });
  if (!c) return;
  const heading = approved ? `Your request for ${c.parcelName} is approved` : `Your request for ${c.parcelName} was declined`;
  const fee = c.feeMinor && c.currency ? formatMoney(c.feeMinor, c.currency) : null;
  const feeLine = fee ? `The fee is ${fee}, paid in My permits.` : 'There is no fee.';
  const next = !approved
    ? 'You may ask again later or look for other parcels.'
    : fee
      ? 'Accept the terms and pay the fee in My permits; the permit is active from its first day once both are done.'
      : 'Accept the terms in My permits; the permit is active from its first day once they are accepted.';
  const wrote = message ? `The landowner wrote: "${message}"` : 'The landowner added no message.';
  await send(tx, c.holderEmails, 'permit-decision', heading, heading, approved ? [feeLine, wrote, next] : [...(message ? [wrote] : []), next],
    { label: 'Open My permits', url: `${origin}/my-permits` });
}

export async function noticeGranted(tx: Tx, { permitId, origin, invited }: { permitId: string; origin: string; invited: boolean }) {
  const c = await permitContacts(tx, { permitId });
  if (!c) return;
  const heading = `${c.ownerName ?? 'A landowner'} granted you a permit for ${c.parcelName}`;
  const paragraphs = invited
    ? ['Tallywood is where landowners record who may forage on their land and how much. An account has been made for this address; sign in with it to see the permit, accept the terms and pay any fee.']
    : ['Accept the terms (and pay any fee) in My permits; the permit is active from its first day once both are done.'];
  await send(tx, c.holderEmails, invited ? 'invitation' : 'permit-granted', heading, heading, paragraphs,
    { label: invited ? 'Sign in to Tallywood' : 'Open My permits', url: `${origin}${invited ? '/sign-in' : '/my-permits'}` });
}

/** `refundDue`: the fee was paid and the permit had not begun, so it is given back (after the revocation commits). */
export async function noticeRevoked(tx: Tx, { permitId, origin, reason, refundDue }: { permitId: string; origin: string; reason: string; refundDue: boolean }) {
  const c = await permitContacts(tx, { permitId });
  if (!c) return;
  const heading = `Your permit for ${c.parcelName} is revoked`;
  await send(tx, c.holderEmails, 'permit-revoked', heading, heading,
    [`The landowner's reason: "${reason}"`, refundDue ? 'The fee you paid is being refunded; a separate e-mail confirms it once it is. Do not harvest there from now on.' : 'Do not harvest there from now on.'],
    { label: 'Open My permits', url: `${origin}/my-permits` });
}

/**
 * Tells the holders of approved and active permits (a club's stewards for a club permit) which of
 * their limits a landowner's change made tighter, with the old figure beside the new. `before` and
 * `after` are each permit's limits (listPermitsBindingLimits) around the change; a permit whose
 * limits got no tighter is told nothing.
 */
export async function noticeLimitsTightened(tx: Tx, { before, after, origin }: { before: Map<string, NamedLimit[]>; after: Map<string, NamedLimit[]>; origin: string }) {
  for (const [permitId, limits] of after) {
    const changes = tightenedLimits(before.get(permitId) ?? [], limits);
    if (changes.length === 0) continue;
    const c = await permitContacts(tx, { permitId });
    if (!c) continue;
    const heading = c.isClub ? `Tighter limits on the ${c.holderName ?? 'club'} permit for ${c.parcelName}` : `Tighter limits on your permit for ${c.parcelName}`;
    await send(tx, c.holderEmails, 'limits-tightened', heading, heading,
      [`${c.ownerName ?? 'The landowner'} changed the limits on ${c.parcelName}. From now on:`, ...changes.map(limitChangeLine),
        'What was already recorded stays as it is; what remains is worked out against the new limits. Check the Field before you harvest there again.'],
      { label: c.isClub ? 'Open Club' : 'Open My permits', url: `${origin}${c.isClub ? '/club' : '/my-permits'}` });
  }
}
