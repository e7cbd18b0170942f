import type { Tx } from '../db/client';
import { mailHtml, sendMail } from './mail';

/**
 * The e-mail that tells a landowner how an admin answered their ask to be verified, written in `tx`,
 * the decision's transaction: it exists exactly when the decision does.
 */
export async function noticeLandownerDecision(tx: Tx, { to, name, origin, verified, reason }: { to: string; name: string | null; origin: string; verified: boolean; reason?: string }) {
  const heading = verified ? 'Your landowner account is verified' : 'Your landowner account was not verified';
  const paragraphs = verified
    ? [
        `${name ? `${name}, an` : 'An'} admin has checked what you told us about your land and verified your account.`,
        'You can now list parcels for foragers to find, grant permits and decide access requests.',
      ]
    : [
        `${name ? `${name}, an` : 'An'} admin could not verify your landowner account yet.`,
        `The admin's reason: "${reason ?? ''}"`,
        'You can still draft parcels. An admin can verify your account later, once the reason above is settled.',
      ];
  const action = { label: verified ? 'Open Land' : 'Open Tallywood', url: `${origin}${verified ? '/land' : '/'}` };
  await sendMail({
    purpose: verified ? 'landowner-verified' : 'landowner-declined',
    to,
    subject: heading,
    text: `${heading}\n\n${paragraphs.join('\n\n')}\n\n${action.label}: ${action.url}\n`,
    html: mailHtml({ heading, paragraphs, action }),
  }, tx);
}
