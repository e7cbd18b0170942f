import { endpoint, guard, idParam, json, wantsRedirect } from '../../../../server/http';
import { startCheckout } from '../../../../server/payments';

/** Starts (or resumes) paying a permit's fee: `{ url }` for API clients, a redirect to the checkout for a plain form. */
export const POST = endpoint(async ({ locals, params, request, url, redirect }) => {
  const actor = guard(locals.actor, 'permit:request');
  const permitId = idParam(params.id, 'Permit');
  const checkout = await startCheckout({ permitId, payer: { id: actor.id, email: actor.email }, origin: url.origin });
  return wantsRedirect(request) ? redirect(checkout.url, 303) : json(checkout);
});
