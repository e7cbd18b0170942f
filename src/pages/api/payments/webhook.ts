import { bodyTooLarge, endpoint, json } from '../../../server/http';
import { handleWebhook } from '../../../server/payments';
import { readCapped } from '../../../server/request-body';

/** The provider's events are a few kilobytes; a body past this is not one of them. */
const maxEventBytes = 256 * 1024;

/**
 * The payment provider's webhook. No session: the Stripe-Signature header proves the sender, and it
 * signs the exact bytes, so the body is read as text. (Astro's origin check covers form posts only;
 * the provider posts JSON.)
 */
export const POST = endpoint(async ({ request }) => {
  const body = new TextDecoder().decode(await readCapped(request, maxEventBytes, () => bodyTooLarge(maxEventBytes)));
  return json(await handleWebhook(body, request.headers.get('stripe-signature'), new Date()));
});
