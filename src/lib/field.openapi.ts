import type { ApiOperation } from './api-operation';
import { checkInSchema, correctionSchema, fieldSyncSchema, harvestSchema } from './field.schemas';
import { exportDescription, exportFormatParam } from './land.openapi';
import { ledgerFiltersSchema } from './ledger.schemas';

/** The field (check-ins, entries, offline sync, photos) and ledger endpoints, for the OpenAPI document (src/server/openapi.ts). */

const forager = 'Foragers';
const recorded = { status: 201 as const, description: '`{ entry, replayed, tallies }`; 200 when the key was sent before (`replayed: true`)' };

export const fieldOperations: ApiOperation[] = [
  {
    method: 'post', path: '/api/check-ins', tag: 'field', summary: 'Check in: position and accuracy radius; answers the verdict, hazards and remaining quantities', who: forager, body: checkInSchema,
    description: 'Answers only with parcels you may know of: listed parcels open to requests, your own listed parcels, and listed parcels on which you or one of your clubs hold a permit. ' +
      'Drafts and archived parcels never take part. When no such parcel is near, `parcel` and `distanceToEdgeM` are null and nothing is named.',
    ok: { status: 200, description: 'The verdict, with the hazards and what remains under each limit' },
  },
  {
    method: 'post', path: '/api/harvest-entries', tag: 'field', summary: 'Record a harvest entry: one quantity per measure its limits count (idempotent by key; over a limit needs acknowledgeOver)', who: forager,
    body: harvestSchema, ok: recorded, refusals: { 409: 'Over a limit and not acknowledged, or the key was used for another entry' },
  },
  {
    method: 'post', path: '/api/harvest-entries/{id}/corrections', tag: 'field', who: "The forager who recorded the entry", body: correctionSchema, ok: recorded,
    summary: "Correct one of your entries: signed quantities and a reason, counted on the day, visit and permit of the entry's chain (no check-in needed)",
  },
  { method: 'post', path: '/api/harvest-entries/preview', tag: 'field', summary: 'The tallies as they would be after this entry; saves nothing', who: forager, body: harvestSchema, ok: { status: 200, description: 'The tallies and the verdict' } },
  {
    method: 'post', path: '/api/field/sync', tag: 'field', summary: 'Send check-ins and entries recorded offline (1–50, in the order recorded); answers one result per item, in order', who: `${forager} (their own batch)`, body: fieldSyncSchema,
    description: 'Each item is idempotent by its key (per forager): sent again, it answers its first result with `replayed: true` and records nothing twice. ' +
      '`foragerId` names the account that recorded the batch on the device: another than the signed-in one is a 409 (`other-forager`) and nothing is written. ' +
      'Each item is saved in its own transaction. `status` is `recorded`, `flagged` (recorded, with `flag: { kind, message }`: `breach` when going over was confirmed on the device, ' +
      '`over-on-sync` when it was over only once others\' entries were counted, `off-permit` when harvest was not clear where and when it was recorded) or `refused` ' +
      '(recorded nowhere, with `message`: a device clock ahead of ours by more than 2 minutes, before `packAsOf` or more than 30 days old; a parcel or species not open to you; an item with its `kind` and `idempotencyKey` but malformed otherwise). A body that is not such a list is a 400. ' +
      'An entry counts on the parcel-local day of `recordedAt`.',
    ok: { status: 200, description: '`{ results: [{ idempotencyKey, kind, status, entryId?, checkInId?, flag?, message?, replayed }] }`' }, refusals: { 409: 'The batch was recorded by another account' },
  },
  { method: 'post', path: '/api/visits/{id}/check-out', tag: 'field', summary: 'End a visit', who: 'The forager on the visit', ok: { status: 200, description: '`{ checkedOut: true }`' } },
  {
    method: 'get', path: '/api/field/pack', tag: 'field', who: forager,
    summary: 'Your field pack: every parcel you may use under your own or a club permit, with what the verdict needs, your tallies as of now and the terms',
    description: 'The phone keeps it (IndexedDB) and decides check-ins from it with no signal, by the same engine as the server. Private: answered with Cache-Control: private, no-store.',
    ok: { status: 200, description: 'The field pack' },
  },
  {
    method: 'get', path: '/api/field/export.{format}', tag: 'field', who: forager,
    summary: "Download the boundaries and no-harvest zones of every parcel you may use (the field pack's) as GeoJSON, KML or GPX",
    description: exportDescription, params: { format: exportFormatParam }, ok: { status: 200, description: 'The file, as an attachment' },
  },
  {
    method: 'post', path: '/api/photos', tag: 'field', summary: 'Upload a harvest photo (multipart `photo`, images only, 10 MB); answers its GPS position if it has one', who: forager,
    multipart: { field: 'photo', description: 'An image, at most 10 MB' }, ok: { status: 201, description: '`{ uploadId, gps }`' },
  },
  {
    method: 'get', path: '/api/photos/{id}', tag: 'field', summary: 'A photo of a harvest entry',
    who: "The forager who took it (the original); the landowner of a parcel where that forager's entry carries it, or the active steward of the club whose permit the entry counts under (a copy without metadata)",
    ok: { status: 200, description: 'The image', type: 'image/*' },
  },
  { method: 'get', path: '/api/ledger', tag: 'ledger', summary: 'Your own entries and totals', who: `${forager} (their own)`, query: ledgerFiltersSchema, ok: { status: 200, description: '`{ entries, totals }`' } },
  { method: 'get', path: '/api/ledger/export.csv', tag: 'ledger', summary: 'Your ledger as CSV (RFC 4180)', who: `${forager} (their own)`, query: ledgerFiltersSchema, ok: { status: 200, description: 'The CSV, as an attachment', type: 'text/csv' } },
];
