import { z } from 'zod';
import type { ApiOperation } from './api-operation';
import { exportFormatNames, exportFormats } from './boundary-exports';
import { allowanceSchema, boundaryGeometry, closureSchema, hazardSchema, newParcelSchema, parcelUpdateSchema, termsSchema, zoneSchema } from './land.schemas';

/** The parcel and parcel-rule endpoints, for the OpenAPI document (src/server/openapi.ts). */

/** What a boundary's overlap warnings say, for the endpoints that check one. */
const overlapWarnings =
  'Overlaps are warnings, never refusals. `overlap-own` names your own parcels (drafts too) with `parcels: [{ parcelId, name, overlapM2 }]`; ' +
  "`overlap` only says that the boundary overlaps land registered by someone else (another owner's listed parcel), with no name, id, area or " +
  "boundary. Other owners' drafts and archived parcels are not counted.";

/** What every boundary download holds and how each format writes an area. */
export const exportDescription =
  'An attachment (Content-Disposition), in WGS 84 longitude and latitude as stored. GeoJSON (RFC 7946): one Feature per parcel and per zone, ' +
  'with `name`, `description`, `kind` (`parcel`, `no-harvest-zone`), `parcel` and a zone\'s `reason`. KML 2.2: one Placemark per parcel and per zone. ' +
  'GPX 1.1 has no areas: each ring is a track (`trk`) that ends on its first point, holes and zones as tracks of their own. ' +
  'The boundary importer (`POST /api/boundaries/check`) reads each file back.';

/** The `{format}` of a boundary download. */
export const exportFormatParam = z.enum(exportFormats).meta({ description: exportFormats.map((format) => `${format} (${exportFormatNames[format]})`).join(', ') });

const owner = "The parcel's landowner";
const created = (what: string) => ({ status: 201 as const, description: `The ${what}, as saved` });

export const landOperations: ApiOperation[] = [
  { method: 'get', path: '/api/parcels', tag: 'parcels', summary: "The landowner's parcels", who: 'Landowners (their own parcels only)', ok: { status: 200, description: '`{ parcels }`' } },
  {
    method: 'post', path: '/api/parcels', tag: 'parcels', summary: 'Create a parcel (boundary checked; overlaps are warnings)', who: 'Landowners (an unverified one may draft)',
    description: `${overlapWarnings} A new parcel has no allowance or terms, so \`openToRequests: true\` is a 409 \`not-ready-for-requests\`; open it with PATCH once it has both.`,
    body: newParcelSchema, ok: created('parcel, with its warnings'), refusals: { 409: 'Not ready to open to requests' },
  },
  { method: 'get', path: '/api/parcels/{id}', tag: 'parcels', summary: 'One of your parcels', who: owner, ok: { status: 200, description: '`{ parcel }`' } },
  {
    method: 'patch', path: '/api/parcels/{id}', tag: 'parcels', summary: 'Change settings or boundary', who: `${owner}; listing it publicly needs a verified landowner`,
    description: `${overlapWarnings} Opening a parcel to requests (\`openToRequests: true\`) needs at least one allowance and published terms; without them it is a 409 \`not-ready-for-requests\` saying what is missing.`,
    body: parcelUpdateSchema, ok: { status: 200, description: 'The parcel as changed, with its warnings' }, refusals: { 409: 'Not ready to open to requests' },
  },
  {
    method: 'get', path: '/api/parcels/{id}/export.{format}', tag: 'parcels', summary: "Download the parcel's boundary and no-harvest zones (GeoJSON, KML or GPX)", who: owner,
    description: exportDescription, params: { format: exportFormatParam }, ok: { status: 200, description: 'The file, as an attachment' },
  },
  {
    method: 'post', path: '/api/boundaries/check', tag: 'parcels', summary: 'Check an uploaded file (multipart `file`: GeoJSON, KML, GPX) or a drawn geometry; saves nothing', who: 'Landowners',
    description: overlapWarnings, body: z.object({ geometry: boundaryGeometry }), multipart: { field: 'file', description: 'A GeoJSON, KML or GPX file' },
    ok: { status: 200, description: '`{ format, notes, features: [{ name, geometry, ok, problems, warnings… }] }`: a geometry it could read is answered here, with `ok: false` and its problems when it cannot be saved' },
  },
  { method: 'post', path: '/api/parcels/{id}/zones', tag: 'parcel rules', summary: 'Add a no-harvest zone inside the parcel', who: owner, body: zoneSchema, ok: created('zone') },
  { method: 'delete', path: '/api/parcels/{id}/zones/{zoneId}', tag: 'parcel rules', summary: 'Remove a zone', who: owner, ok: { status: 200, description: 'Removed' } },
  { method: 'post', path: '/api/parcels/{id}/closures', tag: 'parcel rules', summary: 'Add a closure', who: owner, body: closureSchema, ok: created('closure') },
  { method: 'delete', path: '/api/parcels/{id}/closures/{closureId}', tag: 'parcel rules', summary: 'Remove a closure', who: owner, ok: { status: 200, description: 'Removed' } },
  { method: 'post', path: '/api/parcels/{id}/hazards', tag: 'parcel rules', summary: 'Add a hazard', who: owner, body: hazardSchema, ok: created('hazard') },
  { method: 'delete', path: '/api/parcels/{id}/hazards/{hazardId}', tag: 'parcel rules', summary: 'Remove a hazard', who: owner, ok: { status: 200, description: 'Removed' } },
  { method: 'post', path: '/api/parcels/{id}/terms', tag: 'parcel rules', summary: 'Publish a new version of the terms', who: owner, body: termsSchema, ok: created('terms version') },
  {
    method: 'post', path: '/api/parcels/{id}/allowances', tag: 'parcel rules', summary: 'Add the allowance of a species the parcel does not allow yet (409 `allowance-exists` with `details.allowanceId` when it has one)',
    who: owner, body: allowanceSchema, ok: created('allowance'), refusals: { 409: 'The species has an allowance already' },
  },
  { method: 'put', path: '/api/parcels/{id}/allowances', tag: 'parcel rules', summary: 'Set the allowance of one species, creating or replacing it', who: owner, body: allowanceSchema, ok: { status: 200, description: '`{ allowance }`' } },
  {
    method: 'put', path: '/api/parcels/{id}/allowances/{allowanceId}', tag: 'parcel rules', summary: 'Change one allowance in place: seasons, methods and limits (its species stays); recorded in the parcel history',
    who: owner, body: allowanceSchema, ok: { status: 200, description: '`{ allowance }`' },
  },
  { method: 'delete', path: '/api/parcels/{id}/allowances/{allowanceId}', tag: 'parcel rules', summary: 'Remove an allowance', who: owner, ok: { status: 200, description: 'Removed' } },
  {
    method: 'get', path: '/api/parcels/{id}/history', tag: 'parcel rules', summary: "The parcel's history: changes to allowances, closures, zones, hazards, terms and settings, newest first",
    who: owner, ok: { status: 200, description: 'The changes, each with the sentence it reads as' },
  },
];
