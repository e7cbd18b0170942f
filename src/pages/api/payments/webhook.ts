import { endpoint, json } from '../../../server/http';
import { handleWebhook } from '../../../server/payments';

/**
 * The payment provider's webhook. No session: the Stripe-Signature header proves the sender, and it
 * signs the exact bytes, so the body is read as text. (Astro's origin check covers form posts only;
 * the provider posts JSON.)
 */
export const POST = endpoint(async ({ request }) =>
  json(await handleWebhook(await request.text(), request.headers.get('stripe-signature'), new Date())),
);
