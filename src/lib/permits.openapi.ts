import { z } from 'zod';
import type { ApiOperation } from './api-operation';
import { accessRequestSchema, decisionSchema, grantPermitSchema, permitLimitSchema, revokeSchema } from './permits.schemas';

/** The permit, access-request and payment endpoints, for the OpenAPI document (src/server/openapi.ts). */

/** How a fee may be sent, for the endpoints that take one. */
const feeWords =
  'A fee may be sent as `fee`, a decimal string in the currency as a person writes it ("12.50", "1,000.00"; at most the currency\'s decimals, ' +
  'so "12.505" dollars is refused), or as `feeMinor`, whole minor units (1250 cents). It is stored in minor units either way; send one of the two.';

const verifiedOwner = "The parcel's landowner, once verified";
const holder = "The permit's holder (a forager, or a steward for their club)";

export const permitOperations: ApiOperation[] = [
  { method: 'get', path: '/api/parcels/{id}/permits', tag: 'permits', summary: "The parcel's permits with their histories", who: "The parcel's landowner", ok: { status: 200, description: '`{ permits }`' } },
  {
    method: 'get', path: '/api/permits/status', tag: 'permits', summary: "Whether the permit on a card is still active (query: token, the card's signed statement)", who: 'Anyone (wardens need no account)', signedIn: false,
    description: 'A token Tallywood did not sign is a 400 (`not-signed`). Answers `{ permit, state, today }` with `lastDay` (active, expired) or `since` (revoked), days on the parcel\'s calendar; nothing more than the card says. ' +
      'The public keys are at /.well-known/permit-keys.json (a JWKS).',
    query: z.object({ token: z.string().meta({ description: "The card's signed statement (a compact JWS), as in its QR code after /verify#" }) }),
    ok: { status: 200, description: '`{ permit, state, today }` with `lastDay` or `since`' },
  },
  { method: 'post', path: '/api/parcels/{id}/permits', tag: 'permits', summary: 'Grant a permit to a forager or a club', description: feeWords, who: verifiedOwner, body: grantPermitSchema, ok: { status: 201, description: '`{ permit }`' } },
  { method: 'get', path: '/api/permits/{id}', tag: 'permits', summary: 'One permit with its history (landowner or holder)', who: `The parcel's landowner or ${holder.charAt(0).toLowerCase()}${holder.slice(1)}`, ok: { status: 200, description: '`{ permit }` with its `history`' } },
  {
    method: 'post', path: '/api/permits/{id}/decision', tag: 'permits', summary: 'Approve or decline an access request; `message` goes to the requester in the decision e-mail', description: feeWords,
    who: verifiedOwner, body: decisionSchema, ok: { status: 200, description: '`{ permit: { id, state } }`' }, refusals: { 409: 'The request was decided already' },
  },
  { method: 'post', path: '/api/permits/{id}/revoke', tag: 'permits', summary: 'Revoke a permit (refund when paid and not yet begun)', who: verifiedOwner, body: revokeSchema, ok: { status: 200, description: '`{ permit: { id, state }, refunded, refund }`' } },
  { method: 'post', path: '/api/permits/{id}/limits', tag: 'permits', summary: "Tighten one of the permit's limits (never looser than the parcel's)", who: verifiedOwner, body: permitLimitSchema, ok: { status: 201, description: '`{ limit }`' } },
  { method: 'post', path: '/api/permits/{id}/accept-terms', tag: 'permits', summary: "Accept the parcel's current terms", who: holder, ok: { status: 200, description: '`{ permit: { id, state } }`' } },
  {
    method: 'post', path: '/api/permits/{id}/checkout', tag: 'payments', summary: 'Start paying the fee; answers the hosted checkout URL', who: holder,
    description: 'A form post (Accept: text/html) is sent on to the checkout page with a 303.', ok: { status: 200, description: '`{ url }`, the checkout page' },
  },
  { method: 'get', path: '/api/payments/due', tag: 'payments', summary: 'Fees you may pay now: on permits you hold, and on your clubs\' permits when you steward', who: 'Foragers and stewards (their own fees)', ok: { status: 200, description: '`{ fees }`' } },
  {
    method: 'post', path: '/api/payments/webhook', tag: 'payments', summary: "The payment provider's signed events (idempotent)", who: 'The payment provider: the Stripe-Signature header proves the sender', signedIn: false,
    ok: { status: 200, description: 'Received' },
  },
  {
    method: 'post', path: '/api/calendar-feed', tag: 'permits', summary: 'Make your private calendar feed, or a new address for it (the old address stops working at once)', who: 'Foragers, stewards and landowners (their own)',
    description: 'The address carries a random token that is shown only in this answer (only its SHA-256 is kept): `url` (https) and `webcal` (the same, for calendar apps). ' +
      "The feed holds your permits' windows (yours and your clubs'), and on the parcels you may use each season's opening and closing day and each closure in the next twelve months, as whole days on the parcel's calendar.",
    ok: { status: 201, description: '`{ feed: { url, webcal, createdAt } }`' },
  },
  { method: 'delete', path: '/api/calendar-feed', tag: 'permits', summary: 'Turn your calendar feed off: its address answers 404 from now on', who: 'Foragers, stewards and landowners (their own)', ok: { status: 200, description: '`{ revoked }`, false when no feed was on' } },
  {
    method: 'get', path: '/api/calendar/{token}.ics', tag: 'permits', summary: 'A private calendar feed (iCalendar, RFC 5545), opened by the token in its address', who: 'Whoever holds the address (calendar apps fetch it with no session)', signedIn: false,
    description: 'Whole-day events (DTSTART;VALUE=DATE) on each parcel\'s calendar, with a VTIMEZONE for each parcel\'s zone. An unknown, replaced or turned-off address is a 404 with a plain-text sentence.',
    params: { token: z.string().meta({ description: 'The token from the address POST /api/calendar-feed answered (43 base64url characters)' }) },
    ok: { status: 200, description: 'The calendar', type: 'text/calendar' },
  },
  { method: 'get', path: '/api/open-parcels', tag: 'permits', summary: 'Parcels open to access requests', who: 'Foragers and stewards', ok: { status: 200, description: '`{ parcels }`' } },
  { method: 'post', path: '/api/access-requests', tag: 'permits', summary: 'Ask for access to a parcel', who: 'Foragers and stewards (a steward for their club)', body: accessRequestSchema, ok: { status: 201, description: 'The request, as a requested permit' } },
];
