import { answerMembershipSchema, flagNoteSchema, inviteMemberSchema, manageMembershipSchema, sendSeasonReportSchema } from '../lib/clubs.schemas';
import { z } from 'zod';
import { landownerDecisionSchema, signInSchema, signUpSchema } from '../lib/accounts.schemas';
import { retirementSchema, speciesSchema } from '../lib/catalogue.schemas';
import { allowanceSchema, closureSchema, hazardSchema, newParcelSchema, parcelUpdateSchema, termsSchema, zoneSchema } from '../lib/land.schemas';
import { accessRequestSchema, decisionSchema, grantPermitSchema, permitLimitSchema, revokeSchema } from '../lib/permits.schemas';
import { exportFormatNames } from '../lib/boundary-exports';
import { checkInSchema, correctionSchema, fieldSyncSchema, harvestSchema } from '../lib/field.schemas';

type Route = { method: 'get' | 'post' | 'put' | 'patch' | 'delete'; path: string; summary: string; description?: string; body?: z.ZodType; auth?: boolean; tag: string };

/** What a boundary's overlap warnings say, for the endpoints that check one. */
const overlapWarnings =
  'Overlaps are warnings, never refusals. `overlap-own` names your own parcels (drafts too) with `parcels: [{ parcelId, name, overlapM2 }]`; ' +
  "`overlap` only says that the boundary overlaps land registered by someone else (another owner's listed parcel), with no name, id, area or " +
  "boundary. Other owners' drafts and archived parcels are not counted.";

/** What every boundary download holds and how each format writes an area. */
const exportDescription =
  'An attachment (Content-Disposition), in WGS 84 longitude and latitude as stored. GeoJSON (RFC 7946): one Feature per parcel and per zone, ' +
  'with `name`, `description`, `kind` (`parcel`, `no-harvest-zone`), `parcel` and a zone\'s `reason`. KML 2.2: one Placemark per parcel and per zone. ' +
  'GPX 1.1 has no areas: each ring is a track (`trk`) that ends on its first point, holes and zones as tracks of their own. ' +
  'The boundary importer (`POST /api/boundaries/check`) reads each file back.';

/** How a fee may be sent, for the endpoints that take one. */
const feeWords =
  'A fee may be sent as `fee`, a decimal string in the currency as a person writes it ("12.50", "1,000.00"; at most the currency\'s decimals, ' +
  'so "12.505" dollars is refused), or as `feeMinor`, whole minor units (1250 cents). It is stored in minor units either way; send one of the two.';

/** Every JSON endpoint; request bodies are the zod schemas the endpoints validate with. */
const routes: Route[] = [
  { method: 'post', path: '/api/sign-in', summary: 'E-mail a sign-in link to an existing account', body: signInSchema, auth: false, tag: 'accounts' },
  { method: 'post', path: '/api/sign-up', summary: 'Create an account (forager; landowner unverified) and e-mail a link', body: signUpSchema, auth: false, tag: 'accounts' },
  { method: 'get', path: '/api/me', summary: 'The signed-in person and their roles', tag: 'accounts' },
  { method: 'get', path: '/api/health', summary: 'Database, PostGIS and migrations', auth: false, tag: 'system' },
  { method: 'get', path: '/api/parcels', summary: "The landowner's parcels", tag: 'parcels' },
  { method: 'post', path: '/api/parcels', summary: 'Create a parcel (boundary checked; overlaps are warnings)', description: `${overlapWarnings} A new parcel has no allowance or terms, so \`openToRequests: true\` is a 409 \`not-ready-for-requests\`; open it with PATCH once it has both.`, body: newParcelSchema, tag: 'parcels' },
  { method: 'get', path: '/api/parcels/{id}', summary: 'One of your parcels', tag: 'parcels' },
  { method: 'patch', path: '/api/parcels/{id}', summary: 'Change settings or boundary', description: `${overlapWarnings} Opening a parcel to requests (\`openToRequests: true\`) needs at least one allowance and published terms; without them it is a 409 \`not-ready-for-requests\` saying what is missing.`, body: parcelUpdateSchema, tag: 'parcels' },
  ...(['geojson', 'kml', 'gpx'] as const).map((format): Route => ({
    method: 'get', path: `/api/parcels/{id}/export.${format}`, tag: 'parcels',
    summary: `Download the parcel's boundary and no-harvest zones as ${exportFormatNames[format]}`,
    description: exportDescription,
  })),
  { method: 'post', path: '/api/boundaries/check', summary: 'Check an uploaded file (multipart `file`: GeoJSON, KML, GPX) or a drawn geometry; saves nothing', description: overlapWarnings, tag: 'parcels' },
  { method: 'post', path: '/api/parcels/{id}/zones', summary: 'Add a no-harvest zone inside the parcel', body: zoneSchema, tag: 'parcel rules' },
  { method: 'delete', path: '/api/parcels/{id}/zones/{zoneId}', summary: 'Remove a zone', tag: 'parcel rules' },
  { method: 'post', path: '/api/parcels/{id}/closures', summary: 'Add a closure', body: closureSchema, tag: 'parcel rules' },
  { method: 'delete', path: '/api/parcels/{id}/closures/{closureId}', summary: 'Remove a closure', tag: 'parcel rules' },
  { method: 'post', path: '/api/parcels/{id}/hazards', summary: 'Add a hazard', body: hazardSchema, tag: 'parcel rules' },
  { method: 'delete', path: '/api/parcels/{id}/hazards/{hazardId}', summary: 'Remove a hazard', tag: 'parcel rules' },
  { method: 'post', path: '/api/parcels/{id}/terms', summary: 'Publish a new version of the terms', body: termsSchema, tag: 'parcel rules' },
  { method: 'post', path: '/api/parcels/{id}/allowances', summary: 'Add the allowance of a species the parcel does not allow yet (409 `allowance-exists` with `details.allowanceId` when it has one)', body: allowanceSchema, tag: 'parcel rules' },
  { method: 'put', path: '/api/parcels/{id}/allowances', summary: 'Set the allowance of one species, creating or replacing it', body: allowanceSchema, tag: 'parcel rules' },
  { method: 'put', path: '/api/parcels/{id}/allowances/{allowanceId}', summary: 'Change one allowance in place: seasons, methods and limits (its species stays); recorded in the parcel history', body: allowanceSchema, tag: 'parcel rules' },
  { method: 'get', path: '/api/parcels/{id}/history', summary: "The parcel's history: changes to allowances, closures, zones, hazards, terms and settings, newest first", tag: 'parcel rules' },
  { method: 'delete', path: '/api/parcels/{id}/allowances/{allowanceId}', summary: 'Remove an allowance', tag: 'parcel rules' },
  { method: 'get', path: '/api/parcels/{id}/permits', summary: "The parcel's permits with their histories", tag: 'permits' },
  {
    method: 'get', path: '/api/permits/status', summary: "Whether the permit on a card is still active (query: token, the card's signed statement)", auth: false, tag: 'permits',
    description: 'For wardens, no sign-in. A token Tallywood did not sign is a 400 (`not-signed`). Answers `{ permit, state, today }` with `lastDay` (active, expired) or `since` (revoked), days on the parcel\'s calendar; nothing more than the card says. ' +
      'The public keys are at /.well-known/permit-keys.json (a JWKS).',
  },
  { method: 'post', path: '/api/parcels/{id}/permits', summary: 'Grant a permit to a forager or a club', description: feeWords, body: grantPermitSchema, tag: 'permits' },
  { method: 'get', path: '/api/permits/{id}', summary: 'One permit with its history (landowner or holder)', tag: 'permits' },
  { method: 'post', path: '/api/permits/{id}/decision', summary: 'Approve or decline an access request; `message` goes to the requester in the decision e-mail', description: feeWords, body: decisionSchema, tag: 'permits' },
  { method: 'post', path: '/api/permits/{id}/revoke', summary: 'Revoke a permit (refund when paid and not yet begun)', body: revokeSchema, tag: 'permits' },
  { method: 'post', path: '/api/permits/{id}/limits', summary: "Tighten one of the permit's limits (never looser than the parcel's)", body: permitLimitSchema, tag: 'permits' },
  { method: 'post', path: '/api/permits/{id}/accept-terms', summary: "Accept the parcel's current terms", tag: 'permits' },
  { method: 'post', path: '/api/permits/{id}/checkout', summary: 'Start paying the fee; answers the hosted checkout URL', tag: 'payments' },
  { method: 'post', path: '/api/payments/webhook', summary: "The payment provider's signed events (idempotent)", auth: false, tag: 'payments' },
  {
    method: 'post', path: '/api/check-ins', summary: 'Check in: position and accuracy radius; answers the verdict, hazards and remaining quantities', body: checkInSchema, tag: 'field',
    description: 'Answers only with parcels you may know of: listed parcels open to requests, your own listed parcels, and listed parcels on which you or one of your clubs hold a permit. ' +
      'Drafts and archived parcels never take part. When no such parcel is near, `parcel` and `distanceToEdgeM` are null and nothing is named.',
  },
  { method: 'post', path: '/api/harvest-entries', summary: 'Record a harvest entry: one quantity per measure its limits count (idempotent by key; over a limit needs acknowledgeOver)', body: harvestSchema, tag: 'field' },
  { method: 'post', path: '/api/harvest-entries/{id}/corrections', summary: "Correct one of your entries: signed quantities and a reason, counted on the day, visit and permit of the entry's chain (no check-in needed)", body: correctionSchema, tag: 'field' },
  { method: 'post', path: '/api/harvest-entries/preview', summary: 'The tallies as they would be after this entry; saves nothing', body: harvestSchema, tag: 'field' },
  {
    method: 'post', path: '/api/field/sync', summary: 'Send check-ins and entries recorded offline (1–50, in the order recorded); answers one result per item, in order', body: fieldSyncSchema, tag: 'field',
    description: 'Each item is idempotent by its key (per forager): sent again, it answers its first result with `replayed: true` and records nothing twice. ' +
      '`foragerId` names the account that recorded the batch on the device: another than the signed-in one is a 409 (`other-forager`) and nothing is written. ' +
      'Each item is saved in its own transaction. `status` is `recorded`, `flagged` (recorded, with `flag: { kind, message }`: `breach` when going over was confirmed on the device, ' +
      '`over-on-sync` when it was over only once others\' entries were counted, `off-permit` when harvest was not clear where and when it was recorded) or `refused` ' +
      '(recorded nowhere, with `message`: a device clock ahead of ours by more than 2 minutes, before `packAsOf` or more than 30 days old; a parcel or species not open to you; an item with its `kind` and `idempotencyKey` but malformed otherwise). A body that is not such a list is a 400. ' +
      'An entry counts on the parcel-local day of `recordedAt`. Answer: `{ results: [{ idempotencyKey, kind, status, entryId?, checkInId?, flag?, message?, replayed }] }`.',
  },
  { method: 'post', path: '/api/visits/{id}/check-out', summary: 'End a visit', tag: 'field' },
  {
    method: 'get', path: '/api/field/pack', summary: 'Your field pack: every parcel you may use under your own or a club permit, with what the verdict needs, your tallies as of now and the terms', tag: 'field',
    description: 'The phone keeps it (IndexedDB) and decides check-ins from it with no signal, by the same engine as the server. Private: answered with Cache-Control: private, no-store.',
  },
  ...(['geojson', 'kml', 'gpx'] as const).map((format): Route => ({
    method: 'get', path: `/api/field/export.${format}`, tag: 'field',
    summary: `Download the boundaries and no-harvest zones of every parcel you may use (the field pack's) as ${exportFormatNames[format]}`,
    description: exportDescription,
  })),
  { method: 'post', path: '/api/photos', summary: 'Upload a harvest photo (multipart `photo`, images only, 10 MB); answers its GPS position if it has one', tag: 'field' },
  { method: 'get', path: '/api/photos/{id}', summary: "A photo: the original for the forager who took it; a copy without metadata for the landowner of a parcel where that forager's entry carries it, or the active steward of the club whose permit the entry counts under; 404 for anyone else", tag: 'field' },
  { method: 'get', path: '/api/ledger', summary: 'Your own entries and totals', tag: 'ledger' },
  { method: 'get', path: '/api/ledger/export.csv', summary: 'Your ledger as CSV (RFC 4180)', tag: 'ledger' },
  { method: 'get', path: '/api/species', summary: 'The species catalogue with cautions', tag: 'catalogue' },
  { method: 'post', path: '/api/species', summary: 'Add a species with its cautions, each with its source (admin)', body: speciesSchema, tag: 'catalogue' },
  { method: 'put', path: '/api/species/{id}', summary: "Change a species and its cautions; what changed goes into the species' history (admin)", body: speciesSchema, tag: 'catalogue' },
  {
    method: 'post', path: '/api/species/{id}/retirement', summary: 'Retire a species or bring it back (admin)', body: retirementSchema, tag: 'catalogue',
    description: 'A retired species stays on the allowances and harvest entries that already name it, and its cautions are still shown there; no landowner can add it to a new allowance.',
  },
  { method: 'get', path: '/api/species/{id}/history', summary: 'Who changed a species, when, and what changed, newest first (admin)', tag: 'catalogue' },
  { method: 'post', path: '/api/accounts/{id}/verify-landowner', summary: 'Verify a landowner and e-mail them (admin)', tag: 'accounts' },
  { method: 'post', path: '/api/accounts/{id}/landowner-decision', summary: 'Verify a landowner, or decline with a reason; the landowner is e-mailed the outcome (admin)', body: landownerDecisionSchema, tag: 'accounts' },
  { method: 'get', path: '/api/open-parcels', summary: 'Parcels open to access requests', tag: 'permits' },
  { method: 'post', path: '/api/access-requests', summary: 'Ask for access to a parcel', body: accessRequestSchema, tag: 'permits' },
  { method: 'post', path: '/api/clubs/{id}/members', summary: 'Invite someone to the club by e-mail (steward)', body: inviteMemberSchema, tag: 'clubs' },
  { method: 'post', path: '/api/clubs/{id}/members/{membershipId}', summary: 'Remove a member or change their role (steward)', body: manageMembershipSchema, tag: 'clubs' },
  { method: 'post', path: '/api/memberships/{id}', summary: 'Accept or decline your invitation, or leave the club', body: answerMembershipSchema, tag: 'clubs' },
  { method: 'get', path: '/api/clubs/{id}/audit', summary: "The club's tallies by parcel, species and member against every limit (query: asOf)", tag: 'audit' },
  { method: 'get', path: '/api/clubs/{id}/audit/entries', summary: "The entries behind one member's club tally, without positions (query: parcelId, speciesId, foragerId, asOf)", tag: 'audit' },
  { method: 'get', path: '/api/clubs/{id}/flags', summary: 'Breaches and nearing tallies under the club permits, newest first', tag: 'audit' },
  { method: 'get', path: '/api/parcels/{id}/audit', summary: "Every holder's tallies on your parcel against every limit (query: asOf)", tag: 'audit' },
  { method: 'get', path: '/api/parcels/{id}/audit/entries', summary: 'The entries behind one tally on your parcel, with positions', tag: 'audit' },
  { method: 'get', path: '/api/parcels/{id}/flags', summary: 'Breaches and nearing tallies on your parcel, newest first', tag: 'audit' },
  { method: 'post', path: '/api/flags/{id}/notes', summary: 'Record a follow-up on a flag; `handled` marks it handled, `sendToMember` also e-mails it to the flagged forager', body: flagNoteSchema, tag: 'audit' },
  { method: 'get', path: '/api/parcels/{id}/season-report', summary: 'The season report of a parcel (query: asOf, club)', tag: 'reports' },
  { method: 'get', path: '/api/parcels/{id}/season-report/csv', summary: 'The season report as CSV (RFC 4180)', tag: 'reports' },
  { method: 'post', path: '/api/parcels/{id}/season-report/send', summary: "E-mail the season report to the parcel's landowner", body: sendSeasonReportSchema, tag: 'reports' },
];

const errorSchema = {
  type: 'object',
  required: ['error'],
  properties: { error: { type: 'object', required: ['code', 'message'], properties: { code: { type: 'string' }, message: { type: 'string' }, field: { type: 'string' }, details: {} } } },
};

const errorResponse = (description: string) => ({ description, content: { 'application/json': { schema: { $ref: '#/components/schemas/Error' } } } });

/** The OpenAPI 3.1 document for /api/openapi.json, generated from the zod schemas. */
export function openApiDocument(origin: string) {
  const paths: Record<string, Record<string, unknown>> = {};
  for (const route of routes) {
    const parameters = [...route.path.matchAll(/\{(\w+)\}/g)].map(([, name]) => ({ name, in: 'path', required: true, schema: { type: 'string', format: 'uuid' } }));
    paths[route.path] = {
      ...paths[route.path],
      [route.method]: {
        summary: route.summary,
        ...(route.description ? { description: route.description } : {}),
        tags: [route.tag],
        ...(parameters.length ? { parameters } : {}),
        ...(route.auth === false ? { security: [] } : {}),
        ...(route.body ? { requestBody: { required: true, content: { 'application/json': { schema: z.toJSONSchema(route.body, { io: 'input', unrepresentable: 'any' }) } } } } : {}),
        responses: {
          '200': { description: 'Done' },
          '400': errorResponse('Invalid input; `field` names it'),
          ...(route.auth === false ? {} : { '401': errorResponse('Signed out'), '403': errorResponse('Not allowed for this account') }),
          '404': errorResponse('Not found (also for things that belong to someone else)'),
        },
      },
    };
  }
  return {
    openapi: '3.1.0',
    info: { title: 'Tallywood API', version: '0.1.0', description: 'Land-access permissions and harvest limits for wild foraging.' },
    servers: [{ url: origin }],
    components: {
      schemas: { Error: errorSchema },
      securitySchemes: { session: { type: 'apiKey', in: 'cookie', name: 'authjs.session-token' } },
    },
    security: [{ session: [] }],
    paths,
  };
}
