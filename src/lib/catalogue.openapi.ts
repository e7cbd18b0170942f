import type { ApiOperation } from './api-operation';
import { retirementSchema, speciesSchema } from './catalogue.schemas';

/** The species catalogue endpoints, for the OpenAPI document (src/server/openapi.ts). */

export const catalogueOperations: ApiOperation[] = [
  { method: 'get', path: '/api/species', tag: 'catalogue', summary: 'The species catalogue with cautions', who: 'Anyone signed in', ok: { status: 200, description: '`{ species }`' } },
  { method: 'post', path: '/api/species', tag: 'catalogue', summary: 'Add a species with its cautions, each with its source', who: 'Admins', body: speciesSchema, ok: { status: 201, description: '`{ species }`' } },
  { method: 'put', path: '/api/species/{id}', tag: 'catalogue', summary: "Change a species and its cautions; what changed goes into the species' history", who: 'Admins', body: speciesSchema, ok: { status: 200, description: '`{ species }`' } },
  {
    method: 'post', path: '/api/species/{id}/retirement', tag: 'catalogue', summary: 'Retire a species or bring it back', who: 'Admins', body: retirementSchema,
    description: 'A retired species stays on the allowances and harvest entries that already name it, and its cautions are still shown there; no landowner can add it to a new allowance.',
    ok: { status: 200, description: '`{ species }`' },
  },
  { method: 'get', path: '/api/species/{id}/history', tag: 'catalogue', summary: 'Who changed a species, when, and what changed, newest first', who: 'Admins', ok: { status: 200, description: '`{ history }`' } },
];
