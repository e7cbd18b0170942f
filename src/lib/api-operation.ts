import { extendZodWithOpenApi, type OpenAPIRegistry, type ResponseConfig, type RouteConfig } from '@asteasolutions/zod-to-openapi';
import { z } from 'zod';

/*
 * What an endpoint under src/pages/api/ is, for the OpenAPI document (src/server/openapi.ts) and the
 * API reference page. Each area lists its operations next to its schemas (`src/lib/<area>.openapi.ts`);
 * tests/unit/openapi.test.ts fails for a route file whose operation is not listed.
 */

// zod-to-openapi needs `.openapi()` on zod's types to describe path and query parameters.
extendZodWithOpenApi(z);

export type ApiOperation = {
  method: 'get' | 'post' | 'put' | 'patch' | 'delete';
  /** The route in OpenAPI form: `/api/parcels/{id}` for `src/pages/api/parcels/[id].ts`. */
  path: string;
  tag: string;
  summary: string;
  description?: string;
  /** Who may call it, in words (the rows of `permissionTable` the endpoint guards with). */
  who: string;
  /** The zod schema the endpoint reads its JSON body with (`readJson`). */
  body?: z.ZodType;
  /** The multipart part the endpoint reads (a file). */
  multipart?: { field: string; description: string };
  /** The query string the endpoint reads. */
  query?: z.ZodObject;
  /** Path parameters that are not uuids. */
  params?: Record<string, z.ZodType>;
  /** False for the few endpoints anyone may call with no session. */
  signedIn?: boolean;
  /** The answer when it works. */
  ok: { status: 200 | 201 | 202 | 303; description: string; type?: string };
  /** Refusals beyond the usual ones (400, 401, 403, 404), by status. */
  refusals?: Record<number, string>;
};

/**
 * The body of every refusal, as `AppError.toJSON` (src/lib/errors.ts) writes it: a stable `code`,
 * a sentence a person can act on, the field it is about, and sometimes facts a client can show.
 */
export const apiErrorSchema = z
  .object({
    error: z.object({
      code: z.string().openapi({ description: 'Stable, for programs: invalid-input, signed-out, forbidden, not-found, conflict, rate-limited…' }),
      message: z.string().openapi({ description: 'A sentence a person can act on' }),
      field: z.string().optional().openapi({ description: 'The input field it is about, as a dotted path (limits.0.quantity)' }),
      details: z.unknown().optional().openapi({ description: 'Facts a client can show, such as every problem found in a boundary' }),
    }),
  })
  .openapi('Error');

const uuidParam = z.string().openapi({ format: 'uuid' });

/**
 * The parameters' schemas as new instances: zod gives `.openapi()`, which the generator calls on each
 * parameter, only to schemas made after `extendZodWithOpenApi`, and the areas' schemas are made before.
 * A clone keeps the schema's checks and its `.meta()`.
 */
const parameters = (shape: Record<string, z.ZodType>) => z.object(Object.fromEntries(Object.entries(shape).map(([name, schema]) => [name, schema.clone()])));

const refusal = (description: string): ResponseConfig => ({ description, content: { 'application/json': { schema: apiErrorSchema } } });

/** The operation as zod-to-openapi registers it: parameters, body and responses from the schemas. */
export function routeConfig(op: ApiOperation): RouteConfig {
  const names = [...op.path.matchAll(/\{(\w+)\}/g)].map((m) => m[1] ?? '');
  const params = names.length ? parameters(Object.fromEntries(names.map((name) => [name, op.params?.[name] ?? uuidParam]))) : undefined;
  const content: Record<string, { schema: z.ZodType }> = {};
  if (op.body) content['application/json'] = { schema: op.body };
  if (op.multipart) content['multipart/form-data'] = { schema: z.object({ [op.multipart.field]: z.string().openapi({ format: 'binary', description: op.multipart.description }) }) };
  const takesInput = Boolean(op.body || op.multipart || op.query || names.length);
  const responses: Record<string, ResponseConfig> = {
    [op.ok.status]: { description: op.ok.description, ...(op.ok.type ? { content: { [op.ok.type]: { schema: z.string() } } } : {}) },
    ...(takesInput ? { 400: refusal('Invalid input: `field` names it and `message` says what to change') } : {}),
    ...(op.signedIn === false ? {} : { 401: refusal('Signed out'), 403: refusal('Not allowed for this account') }),
    ...(names.length ? { 404: refusal('Not found (also when it belongs to someone else)') } : {}),
    ...(op.body || op.multipart ? { 413: refusal('The body is larger than this action takes') } : {}),
    ...(op.body && !op.multipart ? { 415: refusal('The body was not sent as application/json') } : {}),
    ...Object.fromEntries(Object.entries(op.refusals ?? {}).map(([status, description]) => [status, refusal(description)])),
  };
  return {
    method: op.method,
    path: op.path,
    tags: [op.tag],
    summary: op.summary,
    ...(op.description ? { description: op.description } : {}),
    'x-who': op.who,
    ...(op.signedIn === false ? { security: [] } : {}),
    request: {
      ...(params ? { params } : {}),
      ...(op.query ? { query: parameters(op.query.shape) } : {}),
      ...(Object.keys(content).length ? { body: { required: true, content } } : {}),
    },
    responses,
  };
}

export function registerOperations(registry: OpenAPIRegistry, operations: ApiOperation[]) {
  for (const op of operations) registry.registerPath(routeConfig(op));
}
