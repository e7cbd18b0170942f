import { readdirSync, readFileSync } from 'node:fs';
import { join, relative, sep } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { apiOperations, openApiDocument } from '../../src/server/openapi';

/**
 * Every endpoint file under src/pages/api/ is in the OpenAPI document, method by method, and the
 * document names no route that has no file. A file's route follows Astro's file-based routing
 * (docs.astro.build/en/guides/routing/): `[id]` is a parameter (`{id}` in OpenAPI, whose path
 * templating is `{name}`, OpenAPI 3.1.0 §4.8.2), `index.ts` is its folder, `foo.json.ts` is
 * `/foo.json`, and a file or folder starting with `_` is no route. An endpoint answers the HTTP
 * methods it exports by name.
 */

const pagesDir = fileURLToPath(new URL('../../src/pages', import.meta.url));
const apiDir = join(pagesDir, 'api');

/**
 * Left out, with the reason: Auth.js answers its own protocol under /api/auth/* (callbacks, CSRF
 * token, session) from one catch-all; Tallywood's sign-in, sign-up and sign-out are documented.
 */
const excluded = new Set(['/api/auth/{...auth}']);

function endpointFiles(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((entry) => {
    if (entry.name.startsWith('_')) return [];
    const path = join(dir, entry.name);
    if (entry.isDirectory()) return endpointFiles(path);
    return /\.(ts|js)$/.test(entry.name) ? [path] : [];
  });
}

function routeOf(file: string): string {
  const segments = relative(pagesDir, file).split(sep);
  const last = (segments.pop() ?? '').replace(/\.(ts|js)$/, '');
  if (last !== 'index') segments.push(last);
  return `/${segments.join('/')}`.replace(/\[([^\]]+)\]/g, '{$1}');
}

const httpMethods = ['GET', 'POST', 'PUT', 'PATCH', 'DELETE'];

function exportedMethods(source: string): string[] {
  return [...source.matchAll(/^export\s+(?:const|(?:async\s+)?function)\s+([A-Z]+)\b/gm)].map((m) => m[1] ?? '').filter((name) => httpMethods.includes(name) || name === 'ALL');
}

const files = endpointFiles(apiDir).map((file) => ({ file: relative(pagesDir, file), route: routeOf(file), source: readFileSync(file, 'utf8') }));
const inFiles = new Set(files.filter((f) => !excluded.has(f.route)).flatMap((f) => exportedMethods(f.source).map((method) => `${method} ${f.route}`)));

const doc = openApiDocument('http://localhost') as unknown as {
  openapi: string;
  paths: Record<string, Record<string, { summary?: string; tags?: string[]; 'x-who'?: string; responses?: Record<string, unknown>; requestBody?: { content?: Record<string, { schema?: { type?: string } }> } }>>;
};
const operations = Object.entries(doc.paths).flatMap(([path, methods]) => Object.entries(methods).map(([method, op]) => ({ key: `${method.toUpperCase()} ${path}`, op })));
const documented = new Set(operations.map((o) => o.key));

describe('the OpenAPI document against src/pages/api/', () => {
  it('finds the endpoint files, with the routes Astro gives them', () => {
    // Routes whose files are named here by hand, one of each kind of name.
    expect(inFiles).toContain('GET /api/me');
    expect(inFiles).toContain('POST /api/check-ins');
    expect(inFiles).toContain('GET /api/parcels'); // parcels/index.ts
    expect(inFiles).toContain('PATCH /api/parcels/{id}'); // parcels/[id].ts
    expect(inFiles).toContain('DELETE /api/parcels/{id}/zones/{zoneId}');
    expect(inFiles).toContain('GET /api/ledger/export.csv');
    expect(inFiles).toContain('GET /api/field/export.{format}');
    expect([...inFiles].some((key) => key.includes('_filters'))).toBe(false);
    expect(inFiles.size).toBeGreaterThan(60);
  });

  it('documents every method of every endpoint file', () => {
    expect([...inFiles].filter((key) => !key.startsWith('ALL ')).filter((key) => !documented.has(key)).sort(), 'endpoints missing from the document: add them to src/lib/<area>.openapi.ts').toEqual([]);
    expect([...inFiles].filter((key) => key.startsWith('ALL ')), 'an ALL export answers every method: document each or export them one by one').toEqual([]);
  });

  it('documents no route that has no file', () => {
    expect([...documented].filter((key) => !inFiles.has(key)).sort()).toEqual([]);
  });

  it('documents a JSON body for every endpoint that reads one', () => {
    const readers = files.filter((f) => /readJson\(|saveAllowanceRequest\(/.test(f.source));
    expect(readers.length).toBeGreaterThan(25);
    const withoutBody = readers
      .filter((f) => !operations.some((o) => o.key.endsWith(` ${f.route}`) && o.op.requestBody?.content?.['application/json']?.schema))
      .map((f) => f.file);
    expect(withoutBody).toEqual([]);
  });

  it('lists each route once', () => {
    const keys = apiOperations.map((op) => `${op.method} ${op.path}`);
    expect(keys.filter((key, i) => keys.indexOf(key) !== i)).toEqual([]);
  });
});

describe('the shape of the OpenAPI document', () => {
  it('is OpenAPI 3.1', () => {
    expect(doc.openapi).toMatch(/^3\.1\.\d+$/);
  });

  it('gives every operation a summary, a tag, who may call it and a successful response', () => {
    const incomplete = operations
      .filter(({ op }) => !op.summary || !op.tags?.length || !op['x-who'] || !Object.keys(op.responses ?? {}).some((status) => /^[23]\d\d$/.test(status)))
      .map((o) => o.key);
    expect(incomplete).toEqual([]);
  });

  it('describes refusals with the error body every endpoint answers', () => {
    const create = doc.paths['/api/check-ins']?.post;
    expect(create?.responses?.['400']).toMatchObject({ content: { 'application/json': { schema: { $ref: '#/components/schemas/Error' } } } });
    const error = (doc as unknown as { components: { schemas: Record<string, { properties: { error: { required: string[]; properties: Record<string, unknown> } } }> } }).components.schemas.Error;
    expect(error?.properties.error.required).toEqual(['code', 'message']);
    expect(Object.keys(error?.properties.error.properties ?? {})).toEqual(expect.arrayContaining(['code', 'message', 'field']));
  });

  it('describes a request body from the schema the endpoint validates with', () => {
    // src/lib/field.schemas.ts, checkInSchema: a position and its accuracy.
    const body = doc.paths['/api/check-ins']?.post?.requestBody?.content?.['application/json']?.schema as { type?: string; required?: string[] };
    expect(body?.type).toBe('object');
    expect(body?.required).toEqual(expect.arrayContaining(['latitude', 'longitude', 'accuracyM']));
  });
});
