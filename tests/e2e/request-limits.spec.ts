import { readFileSync } from 'node:fs';
import { request as httpRequest } from 'node:http';
import { crc32, deflateSync } from 'node:zlib';
import { expect, test, type APIRequestContext } from '@playwright/test';
import { apiAs, baseURL, sessionFile } from './support';

/**
 * Bodies are capped while they are read, whatever the request says about its length: the way an
 * attacker sends them (chunked, with no Content-Length; a lying one; deep nesting; a small image that
 * declares a huge one). Status codes as RFC 9110 defines them: 413 Content Too Large (§15.5.14),
 * 415 Unsupported Media Type (§15.5.16).
 */
let walter: APIRequestContext;
let forager: APIRequestContext;

test.beforeAll(async () => {
  [walter, forager] = await Promise.all(['landowner@example.org', 'forager@example.org'].map(apiAs));
});
test.afterAll(async () => Promise.all([walter, forager].map((c) => c?.dispose())));

const cookieOf = (email: string) => {
  const state = JSON.parse(readFileSync(sessionFile(email), 'utf8')) as { cookies: { name: string; value: string }[] };
  return state.cookies.map((c) => `${c.name}=${c.value}`).join('; ');
};

type Answer = { status: number; body: string; ms: number };

/**
 * A raw POST whose body goes out in chunks with `Transfer-Encoding: chunked` and no Content-Length
 * (or with the `content-length` given, true or not). Resolves with the answer even when the server
 * answers before it has read the whole body. The server cuts a refused body's connection, and now and
 * then the kernel's reset overtakes the answer (a known limit, noted in DEVELOPERS.md): the request
 * is then sent again, up to three times, as a client that saw its connection reset would, and each retry is printed.
 */
async function rawPost(path: string, request: { headers: Record<string, string>; chunks: () => Iterable<Buffer> }): Promise<Answer> {
  let answer = await rawPostOnce(path, request.headers, request.chunks());
  for (let again = 1; answer.status === 0 && again <= 3; again += 1) {
    console.log(`request-limits: ${path} was reset before its answer; sent again (${again} of 3)`);
    answer = await rawPostOnce(path, request.headers, request.chunks());
  }
  return answer;
}

function rawPostOnce(path: string, headers: Record<string, string>, chunks: Iterable<Buffer>): Promise<Answer> {
  const started = Date.now();
  return new Promise((resolve, reject) => {
    let answered = false;
    const req = httpRequest(`${baseURL}${path}`, { method: 'POST', headers: { origin: baseURL, ...headers } }, (res) => {
      answered = true;
      let text = '';
      res.on('data', (c) => (text += c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, body: text, ms: Date.now() - started }));
      res.on('error', () => resolve({ status: res.statusCode ?? 0, body: text, ms: Date.now() - started }));
    });
    req.on('error', (error) => {
      const code = (error as NodeJS.ErrnoException).code;
      if (code !== 'EPIPE' && code !== 'ECONNRESET') return reject(error);
      // Reset while sending: the answer may still be on its way; with none by then, it was lost.
      setTimeout(() => answered || resolve({ status: 0, body: '', ms: Date.now() - started }), 1000);
    });
    (async () => {
      for (const chunk of chunks) {
        if (req.destroyed || req.writableEnded) return;
        if (!req.write(chunk)) await new Promise((r) => req.once('drain', r));
      }
      req.end();
    })().catch(() => {});
  });
}

/** `count` chunks of `size` bytes of `fill`, after an opening `prefix`. */
function* chunked(prefix: string, fill: string, size: number, count: number) {
  yield Buffer.from(prefix);
  const chunk = Buffer.alloc(size, fill);
  for (let i = 0; i < count; i++) yield chunk;
}

test('given a chunked JSON body past 64 KB with no Content-Length, it answers 413 and the field API saves nothing', async () => {
  const before = await (await forager.get('/api/ledger')).text();
  const answer = await rawPost('/api/harvest-entries', {
    headers: { cookie: cookieOf('forager@example.org'), 'content-type': 'application/json', 'transfer-encoding': 'chunked' },
    chunks: () => chunked('{"idempotencyKey":"', 'a', 16 * 1024, 64),
  });
  expect(answer.status).toBe(413);
  expect(JSON.parse(answer.body).error).toMatchObject({ code: 'body-too-large' });
  expect(JSON.parse(answer.body).error.message).toMatch(/larger than 64 KB/);
  expect(await (await forager.get('/api/ledger')).text()).toBe(before);
});

test('given a declared Content-Length past the cap, it answers 413 without waiting for the body, and closes the connection', async () => {
  // Only the first 16 KB of the 10 MB it announces is ever sent; the answer must come anyway. Node's
  // agent keeps connections alive: the previous test's refused body must not have left this one
  // queued behind it on a reused connection (a refused body's connection is closed).
  const answer = await rawPost('/api/sign-in', { headers: { 'content-type': 'application/json', 'content-length': String(10 * 1024 * 1024) }, chunks: () => chunked('{"email":"', 'a', 16 * 1024, 1) });
  expect(answer.status).toBe(413);
});

test('given a body that is not JSON, or JSON sent as another type, it answers 415 or 400 naming the body', async () => {
  const asText = await forager.post('/api/check-ins', { headers: { 'content-type': 'text/plain' }, data: '{"longitude":-72.9,"latitude":43.9,"accuracyM":5}' });
  expect(asText.status()).toBe(415);
  expect((await asText.json()).error.field).toBe('body');
  const form = await forager.post('/api/check-ins', { form: { longitude: '-72.9', latitude: '43.9', accuracyM: '5' } });
  expect(form.status()).toBe(415);
  const notUtf8 = await forager.post('/api/check-ins', { headers: { 'content-type': 'application/json' }, data: Buffer.from([0x7b, 0x22, 0xff, 0xfe, 0x22, 0x7d]) });
  expect(notUtf8.status()).toBe(400);
});

test('given JSON nested 100 000 levels deep, it answers 400 at once instead of overflowing the stack', async () => {
  const deep = `{"geometry":${'['.repeat(100_000)}${']'.repeat(100_000)}}`;
  const response = await walter.post('/api/boundaries/check', { headers: { 'content-type': 'application/json' }, data: deep });
  expect(response.status()).toBe(400);
  expect((await response.json()).error.message).toMatch(/nests deeper than 64 levels/);
});

test('given a boundary file of GeometryCollections nested 10 000 deep, or 501 features, or 300 000 corners, it answers 413 saying which limit', async () => {
  const nested = `${'{"type":"GeometryCollection","geometries":['.repeat(10_000)}${']}'.repeat(10_000)}`;
  const features = JSON.stringify({
    type: 'FeatureCollection',
    features: Array.from({ length: 501 }, (_, i) => ({ type: 'Feature', properties: { name: `lot ${i}` }, geometry: { type: 'Polygon', coordinates: [[[-72, 43], [-72.001, 43], [-72.001, 43.001], [-72, 43]]] } })),
  });
  const corners = JSON.stringify({ type: 'Polygon', coordinates: [Array.from({ length: 300_000 }, (_, i) => [-72 + i * 1e-7, 43])] });
  for (const [name, text, said] of [['nested.geojson', nested, /nests its shapes more than 64 levels/], ['many.geojson', features, /501 features/], ['corners.geojson', corners, /corner points/]] as const) {
    const response = await walter.post('/api/boundaries/check', { multipart: { file: { name, mimeType: 'application/geo+json', buffer: Buffer.from(text) } } });
    expect(response.status(), name).toBe(413);
    const { error } = await response.json();
    expect(error.code, name).toBe('file-too-complex');
    expect(error.message, name).toMatch(said);
  }
});

test('given a chunked multipart upload past the boundary file cap, it answers 413', async () => {
  const boundary = 'tallywoodlimits';
  const answer = await rawPost('/api/boundaries/check', {
    headers: { cookie: cookieOf('landowner@example.org'), 'content-type': `multipart/form-data; boundary=${boundary}`, 'transfer-encoding': 'chunked' },
    chunks: () => chunked(`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="big.geojson"\r\nContent-Type: application/geo+json\r\n\r\n`, ' ', 256 * 1024, 24),
  });
  expect(answer.status).toBe(413);
});

test('given a webhook body past 256 KB, it answers 413 before checking any signature', async () => {
  const answer = await rawPost('/api/payments/webhook', { headers: { 'content-type': 'application/json', 'transfer-encoding': 'chunked' }, chunks: () => chunked('{"id":"', 'x', 64 * 1024, 8) });
  expect(answer.status).toBe(413);
});

/** A PNG (ISO/IEC 15948 / W3C PNG §5) of a few hundred bytes whose header declares width × height pixels. */
function pngDeclaring(width: number, height: number) {
  const chunk = (type: string, data: Buffer) => {
    const body = Buffer.concat([Buffer.from(type, 'latin1'), data]);
    const length = Buffer.alloc(4);
    length.writeUInt32BE(data.length);
    const crc = Buffer.alloc(4);
    crc.writeUInt32BE(crc32(body));
    return Buffer.concat([length, body, crc]);
  };
  const header = Buffer.alloc(13);
  header.writeUInt32BE(width, 0);
  header.writeUInt32BE(height, 4);
  header.writeUInt8(8, 8); // bit depth
  header.writeUInt8(2, 9); // colour type: truecolour
  return Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), chunk('IHDR', header), chunk('IDAT', deflateSync(Buffer.alloc(64))), chunk('IEND', Buffer.alloc(0))]);
}

test('given a small PNG that declares 100 000 × 100 000 pixels, the upload is refused at once with 413 and nothing decoded', async () => {
  const bomb = pngDeclaring(100_000, 100_000);
  expect(bomb.length).toBeLessThan(1024);
  const started = Date.now();
  const response = await forager.post('/api/photos', { multipart: { photo: { name: 'bomb.png', mimeType: 'image/png', buffer: bomb } } });
  expect(response.status()).toBe(413);
  expect((await response.json()).error.message).toMatch(/10000000000|100000 × 100000/);
  expect(Date.now() - started).toBeLessThan(5_000);
});

test('given a parcel change with nothing to change, it answers 400 naming what may be sent, not 500', async () => {
  const { parcels } = (await (await walter.get('/api/parcels')).json()) as { parcels: { id: string }[] };
  const response = await walter.patch(`/api/parcels/${parcels[0]?.id}`, { data: {} });
  expect(response.status()).toBe(400);
  expect((await response.json()).error.message).toMatch(/at least one field/);
});
