import { OpenAPIRegistry, OpenApiGeneratorV31 } from '@asteasolutions/zod-to-openapi';
import { accountOperations } from '../lib/accounts.openapi';
import { apiErrorSchema, registerOperations, type ApiOperation } from '../lib/api-operation';
import { catalogueOperations } from '../lib/catalogue.openapi';
import { clubOperations } from '../lib/clubs.openapi';
import { fieldOperations } from '../lib/field.openapi';
import { landOperations } from '../lib/land.openapi';
import { permitOperations } from '../lib/permits.openapi';

/**
 * Every JSON endpoint under src/pages/api/, by area; each lists its operations next to its schemas.
 * tests/unit/openapi.test.ts fails for a route file with no operation here, and for an operation with no file.
 */
export const apiOperations: ApiOperation[] = [
  ...accountOperations,
  ...landOperations,
  ...permitOperations,
  ...fieldOperations,
  ...clubOperations,
  ...catalogueOperations,
];

/** The order the reference page and the document list the areas in. */
export const apiTags = ['accounts', 'parcels', 'parcel rules', 'permits', 'payments', 'field', 'ledger', 'clubs', 'audit', 'reports', 'catalogue', 'system'];

/** The OpenAPI 3.1 document for /api/openapi.json, generated from the zod schemas the endpoints validate with. */
export function openApiDocument(origin: string) {
  const registry = new OpenAPIRegistry();
  registry.register('Error', apiErrorSchema);
  registry.registerComponent('securitySchemes', 'session', { type: 'apiKey', in: 'cookie', name: 'authjs.session-token' });
  registerOperations(registry, apiOperations);
  return new OpenApiGeneratorV31(registry.definitions).generateDocument({
    openapi: '3.1.0',
    info: { title: 'Tallywood API', version: '0.1.0', description: 'Land-access permissions and harvest limits for wild foraging. Every refusal answers `{ error: { code, message, field? } }`.' },
    servers: [{ url: origin }],
    tags: apiTags.map((name) => ({ name })),
    security: [{ session: [] }],
  });
}
