import { randomUUID } from 'node:crypto';
import net from 'node:net';
import type postgres from 'postgres';
import { connect } from '../../src/db/client';
import { expect, request as playwrightRequest, test, type APIRequestContext } from '@playwright/test';
import { apiAs, baseURL } from './support';

/**
 * Malformed requests to every write endpoint the OpenAPI document lists (GET /api/openapi.json):
 * none may answer 5xx, and a refused one may write no row. Type confusions are generated field by
 * field from the documented request schemas, so a new endpoint is fuzzed without editing this file.
 */

type Schema = {
  type?: string | string[]; properties?: Record<string, Schema>; required?: string[]; items?: Schema; enum?: unknown[]; const?: unknown;
  oneOf?: Schema[]; anyOf?: Schema[]; format?: string; pattern?: string; minLength?: number; maxLength?: number;
  minimum?: number; maximum?: number; minItems?: number; maxItems?: number;
};
type Operation = { method: string; path: string; schema: Schema | null; open: boolean; multipartField: string | null };
type Target = Operation & { client: APIRequestContext; cookie: string; email: string; filled: string; reached: boolean };
type Case = { kind: string; body?: string | Buffer; type?: string; path?: string; chunkedBytes?: number; expect?: number[]; oversize?: boolean };
type Answer = { status: number; text: string };

const users = ['landowner@example.org', 'june.farrand@example.org', 'steward@example.org', 'forager@example.org', 'hattie.brule@example.org', 'beth.lindqvist@example.org'];
const json = 'application/json';
/**
 * RFC 9110 §15.5.1 400 Bad Request: text that is not JSON (RFC 8259 §6: no NaN or Infinity), bytes
 * that are not UTF-8 (RFC 8259 §8.1), or JSON that is not what the schema describes.
 */
const invalid = [400];
/** RFC 9110 §15.5.14 413 Content Too Large; 3 MB passes every JSON limit the app sets (64 KB, 2 MB for boundaries). */
const tooLarge = [413];
/** RFC 9110 §15.5.16 415 Unsupported Media Type: the document names application/json as the only request type. */
const wrongType = [415];

const nonUuids = ['not-a-uuid', '12345', '-1', 'NaN', '1e400', 'null', '%00', '%ff%fe', '%E0%A4%A', encodeURIComponent("' OR 1=1 --"), 'a'.repeat(5000), `${randomUUID()}x`, randomUUID().replaceAll('-', '')];
const unknownUuids = () => [randomUUID(), '00000000-0000-0000-0000-000000000000', 'ffffffff-ffff-ffff-ffff-ffffffffffff'];

/** A value of each JSON type, for the field-by-field type confusions. */
const wrongTypes = ['fuzz', 42, true, false, null, [], ['fuzz'], {}, { fuzz: 1 }].map((value) => JSON.stringify(value));
/** Raw JSON text for a field: NaN and ±Infinity are not JSON (RFC 8259 §6); 1e400 parses to Infinity; 2^53+1 loses its last digit. */
const rawTokens = ['NaN', 'Infinity', '-Infinity', '-0', '1e308', '1e400', '9007199254740993', '"NaN"', '"Infinity"', '"-0"', JSON.stringify('x'.repeat(100_000))];
/** Values no field takes unless its schema documents room for them (a maximum, a maxLength). */
const huge = new Set(['1e308', '9007199254740993', JSON.stringify('x'.repeat(100_000))]);
/**
 * Values the document cannot describe, by field name, so that the rest of a body is valid and one
 * confused field is what gets refused: an IANA zone is documented as a plain string.
 */
const plausible: Record<string, unknown> = { timeZone: 'America/New_York' };
/** Byte sequences RFC 3629 forbids: a lone continuation byte, 0xff, an overlong '/', a surrogate, a cut-off sequence. */
const badUtf8 = [[0x80], [0xff, 0xfe], [0xc0, 0xaf], [0xed, 0xa0, 0x80], [0xe2, 0x82]].map((bytes) => Buffer.from(bytes));

/**
 * Tables a refused request may change. None: a session is only read (its expiry is fixed at
 * sign-in), and every limit (rate_limits) is spent after the body is read and checked, so no
 * refused request here reaches one. Add a table only with the reason a refusal legitimately writes it.
 */
const mayChange = new Map<string, string>();

test('given malformed requests to every write endpoint, none answers 5xx and no refused request writes a row', async () => {
  test.setTimeout(90_000);
  const started = Date.now();
  const sql = connect(process.env.DATABASE_URL ?? '', { max: 1, onnotice: () => {} });
  const anonymous = await playwrightRequest.newContext({ baseURL, extraHTTPHeaders: { origin: baseURL } });
  const clients = new Map(await Promise.all(users.map(async (email) => [email, await apiAs(email)] as const)));
  try {
    const doc = await (await anonymous.get('/api/openapi.json')).json();
    const operations = writeOperations(doc);
    expect(operations.length).toBeGreaterThan(20);
    const owned = await ownedIds(clients);
    const sent = new Map<string, number>();
    let resets = 0;
    for (const op of operations) {
      await test.step(`${op.method} ${op.path}`, async () => {
        const before = await countRows(sql);
        const { target, probes } = await reach(op, owned, clients, anonymous);
        const cases = [...bodyCases(target), ...fieldCases(target), ...pathCases(target, owned)];
        const answers = await inPool(cases, 4, (c) => send(target, c));
        resets += cases.filter((c, i) => !check(target, c, answers[i] ?? { status: 0, text: 'not sent' })).length;
        probes.forEach(({ path, answer }) => check(target, { kind: 'probe []', path }, answer));
        const after = await countRows(sql);
        const written = [...after].filter(([table, n]) => !mayChange.has(table) && before.get(table) !== n).map(([table, n]) => `${table} ${before.get(table)} → ${n}`);
        expect.soft(written, `${op.method} ${op.path} as ${target.email}: refused requests changed row counts`).toEqual([]);
        sent.set(`${op.method} ${op.path}`, cases.length + probes.length);
      });
    }
    const total = [...sent.values()].reduce((a, b) => a + b, 0);
    console.log(`fuzz: ${total} malformed requests in ${((Date.now() - started) / 1000).toFixed(1)} s (${resets} oversize uploads reset before their answer) — ${[...sent].map(([k, n]) => `${k}: ${n}`).join('; ')}`);
    expect(total).toBeGreaterThanOrEqual(1000);
  } finally {
    await Promise.all([anonymous, ...clients.values()].map((c) => c.dispose()));
    await sql.end();
  }
});

const bodilessOwnActions = ['POST /api/sign-out', 'POST /api/calendar-feed', 'DELETE /api/calendar-feed'];

function writeOperations(doc: { paths: Record<string, Record<string, { summary?: string; security?: unknown[]; requestBody?: { content?: Record<string, { schema?: Schema }> } }>> }): Operation[] {
  return Object.entries(doc.paths).flatMap(([path, methods]) =>
    Object.entries(methods)
      .filter(([method]) => ['post', 'put', 'patch', 'delete'].includes(method))
      // These read no body and name nothing in their path: they act on the caller's own session or feed
      // whatever is sent, so nothing sent can be malformed (and sign-out would sign the test's clients out).
      .filter(([method]) => !bodilessOwnActions.includes(`${method.toUpperCase()} ${path}`))
      .map(([method, op]) => ({
        method: method.toUpperCase(),
        path,
        schema: op.requestBody?.content?.[json]?.schema ?? null,
        open: Array.isArray(op.security) && op.security.length === 0,
        multipartField: /multipart `(\w+)`/.exec(op.summary ?? '')?.[1] ?? null,
      })),
  );
}

/** Ids each user owns, by the path segment that names them, read from the GET APIs. */
async function ownedIds(clients: Map<string, APIRequestContext>) {
  const owned = new Map<string, Map<string, string[]>>();
  const add = (segment: string, email: string, rows: { id: string }[] | string[] | undefined) => {
    const bySegment = owned.get(segment) ?? new Map<string, string[]>();
    bySegment.set(email, [...(bySegment.get(email) ?? []), ...(rows ?? []).map((r) => (typeof r === 'string' ? r : r.id))]);
    owned.set(segment, bySegment);
  };
  for (const [email, client] of clients) {
    const read = async (path: string) => {
      const response = await client.get(path);
      return response.ok() ? response.json() : {};
    };
    const me = await read('/api/me');
    add('clubs', email, me.stewardOfClubIds);
    const { parcels = [] } = await read('/api/parcels');
    add('parcels', email, parcels);
    for (const parcel of parcels as { id: string }[]) {
      add('permits', email, (await read(`/api/parcels/${parcel.id}/permits`)).permits);
      add('flags', email, (await read(`/api/parcels/${parcel.id}/flags`)).flags);
    }
    for (const clubId of (me.stewardOfClubIds ?? []) as string[]) add('flags', email, (await read(`/api/clubs/${clubId}/flags`)).flags);
    add('harvest-entries', email, (await read('/api/ledger')).entries);
  }
  return owned;
}

const params = (path: string) => [...path.matchAll(/\{(\w+)\}/g)].map((m) => ({ name: m[1] ?? '', segment: path.slice(0, m.index - 1).split('/').pop() ?? '' }));
const fill = (path: string, values: string[]) => values.reduce((p, value, i) => p.replace(`{${params(path)[i]?.name}}`, value), path);

/**
 * The user and path that get furthest: a `[]` body is answered 400 once the body is read. The
 * first id is one the user owns when the endpoint reads a body (which the malformed body then fails)
 * or names a second id; the other ids name nothing, for an endpoint that reads no body acts on them.
 */
async function reach(op: Operation, owned: Map<string, Map<string, string[]>>, clients: Map<string, APIRequestContext>, anonymous: APIRequestContext) {
  const candidates = op.open ? [['anyone', anonymous] as const] : [...clients];
  const probes: { path: string; answer: Answer }[] = [];
  let best: { target: Target; rank: number } | null = null;
  for (const [email, client] of candidates) {
    const slots = params(op.path);
    const ownFirst = op.schema !== null || slots.length > 1;
    const firsts = slots.length === 0 ? [''] : (ownFirst ? (owned.get(slots[0]?.segment ?? '')?.get(email) ?? []).slice(0, 2) : []).concat(randomUUID());
    for (const first of firsts) {
      const filled = fill(op.path, slots.map((_, i) => (i === 0 ? first : randomUUID())));
      const cookie = (await client.storageState()).cookies.map((c) => `${c.name}=${c.value}`).join('; ');
      const target: Target = { ...op, client, cookie, email, filled, reached: false };
      const answer = await send(target, { kind: 'probe []', body: '[]', type: json });
      probes.push({ path: filled, answer });
      const rank = answer.status === 400 ? 3 : [401, 403].includes(answer.status) ? 1 : 2;
      if (!best || rank > best.rank) best = { target: { ...target, reached: rank === 3 && op.schema !== null }, rank };
      if (rank === 3) return { target: best.target, probes };
    }
  }
  if (!best) throw new Error(`no client for ${op.path}`);
  return { target: best.target, probes };
}

/** Whole-body cases: not JSON, not an object, too deep, too large, the wrong type, not UTF-8. */
function bodyCases(t: Target): Case[] {
  const base = t.schema ? example(t.schema) : {};
  const text = JSON.stringify(base);
  const strict = (expected: number[]) => (t.reached ? expected : undefined);
  const deep = 10_000;
  const cases: Case[] = [
    { kind: 'empty body', body: Buffer.alloc(0), type: json, expect: strict(invalid) },
    ...(t.schema && accepts(t.schema, {}) ? [] : [{ kind: '{}', body: '{}', type: json, expect: strict(invalid) }]),
    ...['[]', 'null', 'true', '0', '"fuzz"', '[{}]'].map((body) => ({ kind: body, body, type: json, expect: strict(invalid) })),
    ...['NaN', 'Infinity', '-Infinity', '{', '{"a":', text.slice(0, -1), `${text}x`, `${text}${text}`, '\u0000'].map((body) => ({ kind: `not JSON ${JSON.stringify(body).slice(0, 24)}`, body, type: json, expect: strict(invalid) })),
    { kind: `${deep} × [`, body: '['.repeat(deep), type: json, expect: strict(invalid) },
    { kind: `${deep} × [ ]`, body: '['.repeat(deep) + ']'.repeat(deep), type: json, expect: strict(invalid) },
    { kind: `${deep} × {"a":`, body: '{"a":'.repeat(deep) + '1' + '}'.repeat(deep), type: json, expect: strict(invalid) },
    ...badUtf8.map((bytes) => ({ kind: `bad UTF-8 ${bytes.toString('hex')}`, body: firstStringReplaced(t, Buffer.concat([Buffer.from('"'), bytes, Buffer.from('"')])), type: json, expect: strict(invalid) })),
    { kind: 'UTF-16 body', body: Buffer.from(text, 'utf16le'), type: `${json}; charset=utf-16`, expect: strict([400, 415]) },
    { kind: 'text/plain', body: text, type: 'text/plain', expect: strict(wrongType) },
    { kind: 'octet-stream', body: Buffer.from(text), type: 'application/octet-stream', expect: strict(wrongType) },
    // Astro answers a cross-site form post itself; the same-origin Origin header (apiAs) lets it reach the endpoint.
    { kind: 'form-urlencoded', body: new URLSearchParams(Object.entries(base as object).map(([k, v]) => [k, typeof v === 'string' ? v : JSON.stringify(v)])).toString(), type: 'application/x-www-form-urlencoded', expect: strict(wrongType) },
    // An endpoint that also takes a multipart form (a boundary file) refuses one without its part as invalid input instead.
    { kind: 'multipart', ...multipart(Object.entries(base as object).map(([name, v]) => ({ name, value: typeof v === 'string' ? v : JSON.stringify(v) }))), expect: strict(t.multipartField ? invalid : wrongType) },
    ...[3, 20].flatMap((mb) => [
      { kind: `${mb} MB`, body: oversize(mb), type: json, expect: strict(tooLarge), oversize: true },
      { kind: `${mb} MB chunked`, chunkedBytes: mb * 1024 * 1024, type: json, expect: strict(tooLarge), oversize: true },
    ]),
  ];
  if (t.multipartField) cases.push(...multipartCases(t.multipartField));
  return cases;
}

/** For an endpoint that reads a multipart part (a boundary file, a photo): broken forms and files that only look right. */
function multipartCases(field: string): Case[] {
  const files: [string, Buffer][] = [
    ['empty file', Buffer.alloc(0)],
    ['random bytes', Buffer.from(Array.from({ length: 4096 }, (_, i) => (i * 7919) % 256))],
    ['JPEG header, junk after', Buffer.concat([Buffer.from([0xff, 0xd8, 0xff, 0xe1, 0xff, 0xff]), Buffer.from('Exif\0\0MM\0*'), Buffer.alloc(2048, 0xff)])],
    ['PNG header, junk after', Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), Buffer.alloc(2048, 0x41)])],
    ['10 000 × [', Buffer.from('['.repeat(10_000))],
    ['FeatureCollection 10 000 deep', Buffer.from(`{"type":"FeatureCollection","features":${'['.repeat(10_000)}`)],
    ['KML cut off', Buffer.from('<?xml version="1.0"?><kml><Placemark><Polygon><outerBoundaryIs><LinearRing><coordinates>1,2 3,4')],
    ['NaN coordinates', Buffer.from('{"type":"Polygon","coordinates":[[[NaN,Infinity],[1e400,-0],[0,0],[NaN,Infinity]]]}')],
    ['bad UTF-8', Buffer.from([0x7b, 0x22, 0xff, 0xfe, 0x22, 0x3a, 0x31, 0x7d])],
  ];
  return [
    ...files.map(([kind, value]) => ({ kind: `multipart ${field}: ${kind}`, ...multipart([{ name: field, value, filename: 'fuzz.geojson' }]) })),
    { kind: 'multipart, no such part', ...multipart([{ name: 'fuzz', value: 'fuzz' }]) },
    { kind: 'multipart, no boundary', body: 'fuzz', type: 'multipart/form-data' },
    { kind: 'multipart, wrong boundary', body: multipart([{ name: field, value: 'x', filename: 'x' }]).body, type: 'multipart/form-data; boundary=nothere' },
    { kind: 'multipart 20 MB', ...multipart([{ name: field, value: Buffer.alloc(20 * 1024 * 1024, 0x41), filename: 'fuzz.jpg' }]), expect: tooLarge, oversize: true },
    { kind: 'multipart 20 MB chunked', chunkedBytes: 20 * 1024 * 1024, type: 'multipart/form-data; boundary=fuzz', expect: tooLarge, oversize: true },
  ];
}

/** Each field of the documented schema, in turn, as every JSON type it does not take and as edge-case number text. */
function fieldCases(t: Target): Case[] {
  if (!t.schema) return [];
  const base = example(t.schema);
  return fields(t.schema).flatMap(({ path, schema, required }) => {
    return [...wrongTypes, ...rawTokens]
      .filter((text) => !documentedValue(huge.has(text) ? { maximum: -Infinity, maxLength: -1, ...schema } : schema, text, required))
      .map((text) => ({ kind: `${path.join('.')} = ${text.slice(0, 24)}`, body: withField(base, path, Buffer.from(text)), type: json, expect: t.reached ? (text.length > 1000 ? [400, 413] : invalid) : undefined }));
  });
}

/** Path ids that are not UUIDs, UUIDs that name nothing, and another landowner's parcel (a parcel has one owner). */
function pathCases(t: Target, owned: Map<string, Map<string, string[]>>): Case[] {
  const body = JSON.stringify(t.schema ? example(t.schema) : {});
  const current = t.filled.split('/');
  return params(t.path).flatMap(({ segment }, i) => {
    const others = segment === 'parcels' ? [...(owned.get(segment) ?? [])].filter(([email]) => email !== t.email).flatMap(([, ids]) => ids.slice(0, 1)) : [];
    return [...nonUuids, ...unknownUuids(), ...others].map((id) => {
      const at = t.path.split('/').indexOf(`{${params(t.path)[i]?.name}}`);
      const path = current.map((part, j) => (j === at ? id : part)).join('/');
      return { kind: `path id ${id.slice(0, 24)}`, path, body, type: json };
    });
  });
}

/**
 * Whether the document allows a field this value, so that it is no malformed case: by type,
 * bounds, enum and pattern; besides, an optional field may take null (some read null as absent) and
 * a number field whatever Number() makes a number in range (the API coerces numbers from forms).
 */
function documentedValue(schema: Schema, text: string, required: boolean): boolean {
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch {
    return false;
  }
  if (value === null && !required) return true;
  const types = [schema.type ?? []].flat();
  if (types.some((t) => t === 'number' || t === 'integer') && (typeof value !== 'object' || Array.isArray(value) || value === null)) {
    const n = Number(value);
    if (Number.isFinite(n) && n >= (schema.minimum ?? -Infinity) && n <= (schema.maximum ?? Infinity) && (!types.includes('integer') || Number.isInteger(n))) return true;
  }
  return accepts(schema, value);
}

/** A small JSON Schema check (type, const, enum, oneOf/anyOf, bounds, pattern, items, properties). */
function accepts(s: Schema, v: unknown): boolean {
  if (s.const !== undefined) return v === s.const;
  if (s.enum) return s.enum.includes(v);
  const variants = s.oneOf ?? s.anyOf;
  if (variants) return variants.some((variant) => accepts(variant, v));
  if (s.type === undefined) return true;
  return [s.type].flat().some((type) => {
    switch (type) {
      case 'null': return v === null;
      case 'boolean': return typeof v === 'boolean';
      case 'string': return typeof v === 'string' && v.length >= (s.minLength ?? 0) && v.length <= (s.maxLength ?? Infinity) && (!s.pattern || new RegExp(s.pattern).test(v));
      case 'number': case 'integer': return typeof v === 'number' && v >= (s.minimum ?? -Infinity) && v <= (s.maximum ?? Infinity) && (type === 'number' || Number.isInteger(v));
      case 'array': return Array.isArray(v) && v.length >= (s.minItems ?? 0) && v.length <= (s.maxItems ?? Infinity) && v.every((item) => !s.items || accepts(s.items, item));
      case 'object': {
        if (typeof v !== 'object' || v === null || Array.isArray(v)) return false;
        const record = v as Record<string, unknown>;
        return (s.required ?? []).every((k) => k in record) && Object.entries(s.properties ?? {}).every(([k, p]) => !(k in record) || accepts(p, record[k]));
      }
      default: return false;
    }
  });
}

/** A plausible body for a schema: the first enum value, a fresh UUID, a date where the pattern wants one. */
function example(s: Schema): unknown {
  if (s.const !== undefined) return s.const;
  if (s.enum) return s.enum[0];
  const variant = (s.oneOf ?? s.anyOf)?.find((v) => v.type !== 'null');
  if (variant) return example(variant);
  switch ([s.type].flat().find((t) => t !== 'null')) {
    case 'object': return Object.fromEntries(Object.entries(s.properties ?? {}).map(([k, p]) => [k, k in plausible ? plausible[k] : example(p)]));
    case 'array': return Array.from({ length: Math.max(1, s.minItems ?? 0) }, () => (s.items ? example(s.items) : 'x'));
    case 'number': case 'integer': return s.minimum ?? 0;
    case 'boolean': return false;
    case 'string':
      if (s.format === 'uuid') return randomUUID();
      if (s.format === 'email') return 'fuzz@example.org';
      if (s.pattern) return ['2026-06-01', '06-01', 'usd', '/'].find((sample) => new RegExp(s.pattern ?? '').test(sample)) ?? 'x';
      return 'x'.repeat(Math.max(1, s.minLength ?? 0));
    default: return null;
  }
}

/** Every field path in a schema: object properties, the first array item, the first union member. */
function fields(s: Schema, path: (string | number)[] = [], required = true): { path: (string | number)[]; schema: Schema; required: boolean }[] {
  const here = path.length ? [{ path, schema: s, required }] : [];
  const variant = (s.oneOf ?? s.anyOf)?.find((v) => v.type !== 'null');
  if (variant) return [...here, ...fields(variant, path, required).filter((f) => f.path.length > path.length)];
  if (s.properties) return [...here, ...Object.entries(s.properties).flatMap(([k, p]) => fields(p, [...path, k], (s.required ?? []).includes(k)))];
  if (s.items) return [...here, ...fields(s.items, [...path, 0], true)];
  return here;
}

/** The body with the field at `path` replaced by raw bytes (which may be invalid JSON). */
function withField(base: unknown, path: (string | number)[], raw: Buffer): Buffer {
  const marker = `fuzz-${randomUUID()}`;
  const copy = structuredClone(base) as Record<string | number, unknown>;
  const parent = path.slice(0, -1).reduce<Record<string | number, unknown>>((node, key) => node[key] as Record<string | number, unknown>, copy);
  parent[path[path.length - 1] ?? ''] = marker;
  const [before, after] = JSON.stringify(copy).split(`"${marker}"`);
  return Buffer.concat([Buffer.from(before ?? ''), raw, Buffer.from(after ?? '')]);
}

function firstStringReplaced(t: Target, raw: Buffer): Buffer {
  const field = t.schema && fields(t.schema).find((f) => [f.schema.type].flat().includes('string'));
  return field && t.schema ? withField(example(t.schema), field.path, raw) : Buffer.concat([Buffer.from('{"fuzz":'), raw, Buffer.from('}')]);
}

function multipart(parts: { name: string; value: string | Buffer; filename?: string }[]) {
  const boundary = `fuzz${randomUUID()}`;
  const chunks = parts.flatMap(({ name, value, filename }) => [
    Buffer.from(`--${boundary}\r\ncontent-disposition: form-data; name="${name}"${filename ? `; filename="${filename}"\r\ncontent-type: application/octet-stream` : ''}\r\n\r\n`),
    Buffer.from(value),
    Buffer.from('\r\n'),
  ]);
  return { body: Buffer.concat([...chunks, Buffer.from(`--${boundary}--\r\n`)]), type: `multipart/form-data; boundary=${boundary}` };
}

const oversize = (mb: number) => Buffer.concat([Buffer.from('{"fuzz":"'), Buffer.alloc(mb * 1024 * 1024, 0x78), Buffer.from('"}')]);

async function send(t: Target, c: Case): Promise<Answer> {
  const path = c.path ?? t.filled;
  if (c.chunkedBytes) return sendChunked(t, path, c);
  try {
    // A Buffer, for Playwright JSON-encodes a string body that does not parse as JSON.
    const data = typeof c.body === 'string' ? Buffer.from(c.body) : c.body;
    const response = await t.client.fetch(path, { method: t.method, headers: c.type ? { 'content-type': c.type } : {}, data, maxRedirects: 0, timeout: 20_000 });
    return { status: response.status(), text: await response.text() };
  } catch (error) {
    return { status: 0, text: `no answer: ${String(error).slice(0, 300)}` };
  }
}

/**
 * Playwright always sends a Content-Length, so a chunked body (RFC 9112 §7.1), which has none, goes
 * over a plain socket that stops sending once answered. The answer is read from the bytes received,
 * since the server may reset the connection right after answering (see `check`).
 */
function sendChunked(t: Target, path: string, c: Case): Promise<Answer> {
  const { hostname, port, host } = new URL(baseURL);
  return new Promise((resolve) => {
    const socket = net.connect(Number(port), hostname);
    const received: Buffer[] = [];
    socket.setTimeout(20_000, () => socket.destroy());
    socket.on('data', (data) => received.push(data));
    let failure = '';
    socket.on('error', (error: NodeJS.ErrnoException) => (failure = error.code ?? error.message));
    socket.on('close', () => {
      const text = Buffer.concat(received).toString('utf8');
      const status = Number(/^HTTP\/1\.1 (\d{3})/.exec(text)?.[1] ?? 0);
      // The answer's own chunk-size lines (RFC 9112 §7.1) are dropped; a message is all that is wanted.
      const body = text.slice(text.indexOf('\r\n\r\n') + 4).replace(/^[0-9a-f]+\r\n/gim, '').trim();
      resolve(status ? { status, text: body } : { status: 0, text: `no answer, the connection closed (${failure || 'by the server'}) after ${text.length} bytes` });
    });
    const head = [`${t.method} ${path} HTTP/1.1`, `host: ${host}`, `content-type: ${c.type ?? json}`, 'transfer-encoding: chunked', `origin: ${baseURL}`, ...(t.cookie ? [`cookie: ${t.cookie}`] : [])];
    socket.write(`${head.join('\r\n')}\r\n\r\n`);
    const size = 64 * 1024;
    const chunk = Buffer.concat([Buffer.from(`${size.toString(16)}\r\n`), Buffer.alloc(size, 0x78), Buffer.from('\r\n')]);
    let left = c.chunkedBytes ?? 0;
    const pump = () => {
      while (left > 0 && received.length === 0 && !socket.destroyed) {
        left -= size;
        if (!socket.write(chunk)) return void socket.once('drain', pump);
      }
      // The last chunk once all is sent (RFC 9112 §7.1); once answered, just the end of sending.
      if (!socket.destroyed) socket.end(received.length === 0 ? '0\r\n\r\n' : '');
    };
    pump();
  });
}

/**
 * Every request is refused with a 4xx, with the status a standard names where one applies. Only an
 * oversize upload may instead end in a reset while it is still being sent: the server answers and
 * closes at once, and the reset can erase the answer before the client reads it (RFC 9112 §9.6).
 * Those are counted, not failed; the row check still covers them. Returns false for such a reset.
 */
function check(t: Target, c: Case, answer: Answer): boolean {
  if (answer.status === 0 && c.oversize && /EPIPE|ECONNRESET|socket hang up/.test(answer.text)) return false;
  if (checkerRefused(t, answer)) return true;
  const where = `${t.method} ${c.path ?? t.filled} as ${t.email} [${c.kind}] → ${answer.status}: ${answer.text.slice(0, 400)}`;
  expect.soft(answer.status >= 400 && answer.status < 500, `a 4xx refusal: ${where}`).toBe(true);
  if (c.expect) expect.soft(c.expect, `answered ${c.expect.join(' or ')}: ${where}`).toContain(answer.status);
  return true;
}

/**
 * POST /api/boundaries/check saves nothing and says what is wrong with a geometry it could read: a
 * well-formed Polygon whose numbers are no place on Earth is answered 200 with each feature `ok: false`
 * and its problems (the document says so); that is its refusal. The row check still covers it.
 */
function checkerRefused(t: Target, answer: Answer): boolean {
  if (t.path !== '/api/boundaries/check' || answer.status !== 200) return false;
  try {
    const { features } = JSON.parse(answer.text) as { features?: { ok?: boolean; problems?: unknown[] }[] };
    return Array.isArray(features) && features.length > 0 && features.every((f) => f.ok === false && (f.problems?.length ?? 0) > 0);
  } catch {
    return false;
  }
}

/** Exact row counts of every table in the public schema. */
async function countRows(sql: postgres.Sql) {
  const tables = await sql<{ tablename: string }[]>`select tablename from pg_tables where schemaname = 'public' order by tablename`;
  const rows = await sql.unsafe<{ t: string; n: number }[]>(tables.map(({ tablename }) => `select '${tablename}' as t, count(*)::int as n from public."${tablename}"`).join(' union all '));
  return new Map(rows.map(({ t, n }) => [t, n]));
}

async function inPool<T, R>(items: T[], size: number, run: (item: T) => Promise<R>): Promise<R[]> {
  const results: R[] = [];
  let next = 0;
  await Promise.all(Array.from({ length: size }, async () => {
    while (next < items.length) {
      const i = next++;
      results[i] = await run(items[i] as T);
    }
  }));
  return results;
}
