import { randomUUID } from 'node:crypto';
import { expect, request as playwrightRequest, test, type APIRequestContext } from '@playwright/test';
import { apiAs, baseURL, mailFor, signInApi } from './support';

/** The field API against the real server and database: bad input, concurrency and idempotency. */
const west = -72.99;
const south = 43.89;
const size = 0.003;
const centre = { longitude: west + size / 2, latitude: south + size / 2 };

let walter: APIRequestContext;
let forager: APIRequestContext;
let visitId = '';
let parcelId = '';
const ids: Record<string, string> = {};

test.describe.configure({ mode: 'serial' });

test.beforeAll(async () => {
  [walter, forager] = await Promise.all([apiAs('landowner@example.org'), apiAs('forager@example.org')]);
  const ring = [[west, south], [west + size, south], [west + size, south + size], [west, south + size], [west, south]];
  const created = await walter.post('/api/parcels', { data: { name: `Field API lot ${Date.now()}`, timeZone: 'America/New_York', nearingThresholdPercent: 80, openToRequests: false, description: '', boundary: { type: 'Polygon', coordinates: [ring] } } });
  expect(created.status(), await created.text()).toBe(201);
  parcelId = (await created.json()).parcel.id as string;
  const { species } = (await (await walter.get('/api/species')).json()) as { species: { id: string; commonName: string }[] };
  for (const s of species) ids[s.commonName] = s.id;
  const allow = (speciesId: string | undefined, limits: unknown[]) =>
    walter.put(`/api/parcels/${parcelId}/allowances`, { data: { speciesId, seasons: [{ start: '01-01', end: '12-31' }], methods: ['cut', 'pick', 'dig'], limits } });
  expect((await allow(ids['Fiddlehead (ostrich fern)'], [{ scope: 'day', quantity: '10', unit: 'stem' }])).status()).toBe(200);
  expect((await allow(ids['Oyster mushroom'], [{ scope: 'day', quantity: '5', unit: 'kg' }])).status()).toBe(200);
  const granted = await walter.post(`/api/parcels/${parcelId}/permits`, { data: { holder: { kind: 'forager', email: 'forager@example.org' }, startsOn: '2020-01-01', endsOn: '2099-12-31' } });
  expect(granted.status()).toBe(201);
  const checkIn = await forager.post('/api/check-ins', { data: { ...centre, accuracyM: 5 } });
  expect(checkIn.status(), await checkIn.text()).toBe(200);
  const answer = await checkIn.json();
  expect(answer.verdict).toBe('clear');
  visitId = answer.visitId;
});

test.afterAll(async () => Promise.all([walter, forager].map((c) => c?.dispose())));

const entry = (speciesName: string, quantity: string, unit: string, extra: Record<string, unknown> = {}) => ({
  idempotencyKey: randomUUID(), visitId, speciesId: ids[speciesName], method: 'pick', quantities: [{ quantity, unit }], ...extra,
});
/** A correction of one of the forager's entries: signed quantities in its own measure, and why. */
const correction = (quantity: string, unit: string, reason: string) => ({ idempotencyKey: randomUUID(), reason, quantities: [{ quantity, unit }] });
const correct = (entryId: string, body: ReturnType<typeof correction>) => forager.post(`/api/harvest-entries/${entryId}/corrections`, { data: body });

test('given bad positions, check-in answers 400 naming the field', async () => {
  const cases: [unknown, string][] = [
    [{ longitude: 'NaN', latitude: 43.9, accuracyM: 5 }, 'longitude'],
    [{ longitude: -72.9, latitude: 91, accuracyM: 5 }, 'latitude'],
    [{ longitude: -72.9, latitude: 43.9, accuracyM: -1 }, 'accuracyM'],
    [{ longitude: -72.9, latitude: 43.9 }, 'accuracyM'],
  ];
  for (const [body, field] of cases) {
    const response = await forager.post('/api/check-ins', { data: body });
    expect(response.status()).toBe(400);
    expect((await response.json()).error.field).toBe(field);
  }
  const raw = await forager.post('/api/check-ins', { headers: { 'content-type': 'application/json' }, data: '{"longitude": NaN, "latitude": 43.9, "accuracyM": 5}' });
  expect(raw.status()).toBe(400);
});

test('given an unknown species or a quantity in the wrong measure, the entry is refused and nothing is saved', async () => {
  const unknown = await forager.post('/api/harvest-entries', { data: { ...entry('Oyster mushroom', '1', 'g'), speciesId: randomUUID() } });
  expect(unknown.status()).toBe(400);
  expect((await unknown.json()).error.field).toBe('speciesId');
  const wrong = await forager.post('/api/harvest-entries', { data: entry('Oyster mushroom', '2', 'us-quart') });
  expect(wrong.status()).toBe(400);
  const { error } = await wrong.json();
  expect(error.field).toBe('unit');
  expect(error.message).toMatch(/volume/i);
  // Liquid and dry quarts differ, so the label says which (NIST HB 44 App. C, REFERENCES §1).
  expect(error.message).toContain('US liquid quart');
  const preview = await forager.post('/api/harvest-entries/preview', { data: entry('Oyster mushroom', '1', 'kg') });
  const tally = (await preview.json()).tallies.find((t: { scope: string }) => t.scope === 'day');
  expect(tally.used).toMatch(/^1(\.0+)?$/); // nothing recorded yet: used after this 1 kg entry is 1 kg
});

test('given 50 simultaneous one-stem entries against a limit of 10 stems, exactly 10 are recorded and 40 refused', async () => {
  const responses = await Promise.all(Array.from({ length: 50 }, () => forager.post('/api/harvest-entries', { data: entry('Fiddlehead (ostrich fern)', '1', 'stem') })));
  const statuses = responses.map((r) => r.status());
  expect(statuses.filter((s) => s === 201)).toHaveLength(10);
  expect(statuses.filter((s) => s === 409)).toHaveLength(40);
  for (const r of responses.filter((x) => x.status() === 409)) expect((await r.json()).error.code).toBe('would-go-over');
  const preview = await forager.post('/api/harvest-entries/preview', { data: entry('Fiddlehead (ostrich fern)', '1', 'stem') });
  const day = (await preview.json()).tallies.find((t: { scope: string }) => t.scope === 'day');
  expect(day.used).toMatch(/^11(\.0+)?$/);
  expect(day.state).toBe('over');
});

test('given one idempotency key sent 20 times at once, one entry is recorded and every answer names it', async () => {
  const body = entry('Oyster mushroom', '100', 'g');
  const responses = await Promise.all(Array.from({ length: 20 }, () => forager.post('/api/harvest-entries', { data: body })));
  const statuses = responses.map((r) => r.status()).sort();
  expect(statuses.filter((s) => s === 201)).toHaveLength(1);
  expect(statuses.filter((s) => s === 200)).toHaveLength(19);
  const entryIds = new Set(await Promise.all(responses.map(async (r) => (await r.json()).entry.id)));
  expect(entryIds.size).toBe(1);
  const preview = await forager.post('/api/harvest-entries/preview', { data: entry('Oyster mushroom', '1', 'g') });
  const day = (await preview.json()).tallies.find((t: { scope: string }) => t.scope === 'day');
  // 100 g recorded once, plus this 1 g preview, in the limit's unit (kg): 0.101 kg.
  expect(Number(day.used)).toBeCloseTo(0.101, 6);
});

test('given a key sent again with a different body, it answers 422 saying so and saves nothing', async () => {
  const first = entry('Oyster mushroom', '100', 'g');
  expect((await forager.post('/api/harvest-entries', { data: first })).status()).toBe(201);
  const before = await forager.get('/api/ledger').then((r) => r.text());
  for (const changed of [{ ...first, quantities: [{ quantity: '900', unit: 'g' }] }, { ...first, method: 'cut' }, { ...first, acknowledgeOver: true }]) {
    const again = await forager.post('/api/harvest-entries', { data: changed });
    expect(again.status()).toBe(422);
    const { error } = await again.json();
    expect(error).toMatchObject({ code: 'key-reused', field: 'idempotencyKey' });
    expect(error.message).toMatch(/different entry/);
  }
  // The same key as a correction is another request too.
  const { entry: saved } = await (await forager.post('/api/harvest-entries', { data: first })).json();
  const asCorrection = await correct(saved.id, { ...correction('-10', 'g', 'Weighed again'), idempotencyKey: first.idempotencyKey });
  expect(asCorrection.status()).toBe(422);
  expect(await forager.get('/api/ledger').then((r) => r.text())).toBe(before);
});

test("given another forager's key, it is theirs alone: this forager's entry with the same key is saved, and nothing tells that the key was used", async () => {
  const email = `key-owner-${randomUUID().slice(0, 8)}@example.org`;
  const granted = await walter.post(`/api/parcels/${parcelId}/permits`, { data: { holder: { kind: 'forager', email }, startsOn: '2020-01-01', endsOn: '2099-12-31' } });
  expect(granted.status(), await granted.text()).toBe(201);
  const other = await signInApi(await playwrightRequest.newContext({ baseURL, extraHTTPHeaders: { origin: baseURL } }), email);
  const checkIn = await (await other.post('/api/check-ins', { data: { ...centre, accuracyM: 5 } })).json();
  expect(checkIn.verdict).toBe('clear');
  const mine = entry('Oyster mushroom', '10', 'g');
  const theirs = { ...mine, visitId: checkIn.visitId, quantities: [{ quantity: '20', unit: 'g' }] };
  const saved = await forager.post('/api/harvest-entries', { data: mine });
  expect(saved.status()).toBe(201);
  const alsoSaved = await other.post('/api/harvest-entries', { data: theirs });
  expect(alsoSaved.status(), await alsoSaved.text()).toBe(201);
  expect((await alsoSaved.json()).entry.id).not.toBe((await saved.json()).entry.id);
  await other.dispose();
});

test('given a breach entry sent again with its key, the landowner is told once, not twice', async () => {
  const told = async () => (await mailFor(walter, 'landowner@example.org')).filter((m) => m.subject.startsWith('Limit breached')).length;
  const before = await told();
  const over = entry('Fiddlehead (ostrich fern)', '1', 'stem', { acknowledgeOver: true });
  const first = await forager.post('/api/harvest-entries', { data: over });
  expect(first.status(), await first.text()).toBe(201);
  expect((await first.json()).entry.breach).toBe(true);
  await expect.poll(told).toBe(before + 1);
  const replayed = await Promise.all([1, 2, 3].map(() => forager.post('/api/harvest-entries', { data: over })));
  expect(replayed.map((r) => r.status())).toEqual([200, 200, 200]);
  expect(await told()).toBe(before + 1);
});

test('given a 50 MB photo or a file that is not an image, the upload is refused with a clear 4xx', async () => {
  const big = await forager.post('/api/photos', { multipart: { photo: { name: 'big.jpg', mimeType: 'image/jpeg', buffer: Buffer.alloc(50 * 1024 * 1024, 0xff) } } });
  expect(big.status()).toBe(413);
  expect((await big.json()).error.message).toMatch(/MB/);
  const text = await forager.post('/api/photos', { multipart: { photo: { name: 'notes.jpg', mimeType: 'image/jpeg', buffer: Buffer.from('these are my notes, not a photo') } } });
  expect(text.status()).toBe(415);
});

test("given a photo whose EXIF places it 0.001° north of the check-in, the entry records about 111 m between them", async () => {
  const sharp = (await import('sharp')).default;
  // The check-in is at 43.8915°N, 72.9885°W; the photo says 43°53′33″N (43.8925°N), 72°59′18.6″W.
  const exif = { IFD3: { GPSLatitudeRef: 'N', GPSLatitude: '43/1 53/1 33/1', GPSLongitudeRef: 'W', GPSLongitude: '72/1 59/1 186/10' } };
  const jpeg = await sharp({ create: { width: 16, height: 12, channels: 3, background: '#4f7d47' } }).jpeg().withExif(exif).toBuffer();
  const upload = await forager.post('/api/photos', { multipart: { photo: { name: 'oyster.jpg', mimeType: 'image/jpeg', buffer: jpeg } } });
  expect(upload.status(), await upload.text()).toBe(201);
  const { uploadId, gps } = await upload.json();
  expect(gps.latitude).toBeCloseTo(43.8925, 6);
  const saved = await forager.post('/api/harvest-entries', { data: entry('Oyster mushroom', '50', 'g', { photoUploadId: uploadId }) });
  expect(saved.status(), await saved.text()).toBe(201);
  // 0.001° of latitude at 43.9°N is about 111.1 m on the WGS 84 meridian (from memory ✱).
  const { entry: recorded } = await saved.json();
  expect(recorded.photoDistanceM).toBeGreaterThan(110);
  expect(recorded.photoDistanceM).toBeLessThan(112.5);
});

test('given a correction, it may take away at most what the entry still counts, in the entry\'s own measure', async () => {
  const saved = await forager.post('/api/harvest-entries', { data: entry('Oyster mushroom', '100', 'g') });
  expect(saved.status()).toBe(201);
  const original = (await saved.json()).entry.id as string;
  const tooMuch = await correct(original, correction('-150', 'g', 'Weighed again at home'));
  expect(tooMuch.status()).toBe(400);
  expect((await tooMuch.json()).error.field).toBe('quantities');
  // The entry was weighed (mass); a count of stems is another measure and cannot correct it.
  const otherMeasure = await correct(original, correction('-1', 'stem', 'Wrong species'));
  expect(otherMeasure.status()).toBe(400);
  expect((await otherMeasure.json()).error).toMatchObject({ code: 'unit-mismatch', field: 'quantities' });
  const nobody = await correct(randomUUID(), correction('-1', 'g', 'No such entry'));
  expect(nobody.status()).toBe(404);
  const fair = await correct(original, correction('-0.04', 'kg', 'Weighed again at home: 60 g'));
  expect(fair.status(), await fair.text()).toBe(201);
  expect((await fair.json()).entry).toMatchObject({ correctsEntryId: original, rootEntryId: original, breach: false });
  // 100 g − 0.04 kg leaves 60 g; another −61 g would take away more than remains.
  const past = await correct(original, correction('-61', 'g', 'Again'));
  expect(past.status()).toBe(400);
  expect((await past.json()).error.field).toBe('quantities');
});
