import { randomUUID } from 'node:crypto';
import { expect, test, type APIRequestContext } from '@playwright/test';
import { apiAs, mailFor } from './support';

/**
 * POST /api/field/sync against the built server and its database: a batch recorded offline goes in
 * once, whatever the connection does. Instants are the test's own clock (the server's, under the
 * fixed-instant runs too): recorded a few minutes ago, from a field pack downloaded an hour ago.
 */
const west = -72.97;
const south = 43.87;
const size = 0.003;
const centre = { longitude: west + size / 2, latitude: south + size / 2, accuracyM: 5 };

let walter: APIRequestContext;
let forager: APIRequestContext;
let parcelId = '';
let oysterId = '';
/** The signed-in forager's id, which a batch names (POST /api/field/sync refuses another's). */
let foragerId = '';
/** When the permit was granted: a field pack downloaded before it could not hold it, so packs here are downloaded after. */
let grantedAt = 0;

test.describe.configure({ mode: 'serial' });

test.beforeAll(async () => {
  [walter, forager] = await Promise.all([apiAs('landowner@example.org'), apiAs('forager@example.org')]);
  foragerId = await idOf(forager);
  const ring = [[west, south], [west + size, south], [west + size, south + size], [west, south + size], [west, south]];
  const created = await walter.post('/api/parcels', { data: { name: `Sync API lot ${Date.now()}`, timeZone: 'America/New_York', nearingThresholdPercent: 80, openToRequests: false, description: '', boundary: { type: 'Polygon', coordinates: [ring] } } });
  expect(created.status(), await created.text()).toBe(201);
  parcelId = (await created.json()).parcel.id as string;
  const { species } = (await (await walter.get('/api/species')).json()) as { species: { id: string; commonName: string }[] };
  oysterId = species.find((s) => s.commonName === 'Oyster mushroom')?.id ?? '';
  const allowed = await walter.put(`/api/parcels/${parcelId}/allowances`, { data: { speciesId: oysterId, seasons: [{ start: '01-01', end: '12-31' }], methods: ['pick'], limits: [{ scope: 'day', quantity: '5', unit: 'kg' }] } });
  expect(allowed.status(), await allowed.text()).toBe(200);
  const granted = await walter.post(`/api/parcels/${parcelId}/permits`, { data: { holder: { kind: 'forager', email: 'forager@example.org' }, startsOn: '2020-01-01', endsOn: '2099-12-31' } });
  expect(granted.status(), await granted.text()).toBe(201);
  grantedAt = Date.now();
});

test.afterAll(async () => Promise.all([walter, forager].map((c) => c?.dispose())));

const idOf = async (client: APIRequestContext) => ((await (await client.get('/api/me')).json()) as { id: string }).id;
const minutesAgo = (n: number) => new Date(Date.now() - n * 60_000).toISOString();
/** An instant after `from`, and before now. */
const after = (from: number, ms: number) => new Date(Math.min(from + ms, Date.now())).toISOString();
const batch = (grams: string) => ({
  foragerId,
  packAsOf: after(grantedAt, 1),
  items: [
    { kind: 'check-in', idempotencyKey: randomUUID(), recordedAt: after(grantedAt, 2), position: { ...centre, source: 'tap' } },
    {
      kind: 'entry', idempotencyKey: randomUUID(), recordedAt: after(grantedAt, 3), position: { ...centre, source: 'gps' }, parcelId, speciesId: oysterId, method: 'pick',
      quantities: [{ quantity: grams, unit: 'g' }], acknowledgeOver: false,
    },
  ],
});
type Result = { idempotencyKey: string; kind: string; status: string; entryId?: string; checkInId?: string; replayed: boolean };
const send = async (body: unknown) => {
  const response = await forager.post('/api/field/sync', { data: body });
  expect(response.status(), await response.text()).toBe(200);
  return ((await response.json()) as { results: Result[] }).results;
};
/** The forager's entries on this parcel of exactly this quantity, from their own ledger. */
const entriesOf = async (grams: string) => {
  const { entries } = (await (await forager.get(`/api/ledger?parcelId=${parcelId}`)).json()) as { entries: { id: string; quantities: { quantity: string }[] }[] };
  return entries.filter((e) => e.quantities.some((q) => q.quantity === grams)).map((e) => e.id);
};

test('given a batch recorded offline, it syncs: one result per item, in order, recorded; sent again, the same results, replayed, and nothing twice', async () => {
  const body = batch('123.25');
  const first = await send(body);
  expect(first.map((r) => [r.idempotencyKey, r.kind, r.status, r.replayed])).toEqual(body.items.map((i) => [i.idempotencyKey, i.kind, 'recorded', false]));
  expect(first[0]?.checkInId).toMatch(/^[0-9a-f-]{36}$/);
  expect(await entriesOf('123.25')).toEqual([first[1]?.entryId]);
  const again = await send(body);
  expect(again.map((r) => [r.status, r.replayed, r.checkInId ?? r.entryId])).toEqual(first.map((r) => ['recorded', true, r.checkInId ?? r.entryId]));
  expect(await entriesOf('123.25')).toEqual([first[1]?.entryId]);
});

test('given a send whose answer never arrives, then the same batch again, there is one entry', async () => {
  const body = batch('77.5');
  // A 1 ms timeout: the client gives up before the answer, as a phone does when the signal drops.
  const lost = await forager.post('/api/field/sync', { data: body, timeout: 1 }).then(
    () => 'answered',
    (error: Error) => error.message,
  );
  expect(lost).toMatch(/Timeout|timed out|answered/i);
  const retry = await send(body);
  expect(retry.map((r) => r.status)).toEqual(['recorded', 'recorded']);
  const entryId = retry[1]?.entryId;
  expect(await entriesOf('77.5')).toEqual([entryId]);
  // Whichever of the two saved it, a third send answers that one, replayed.
  const third = await send(body);
  expect(third.map((r) => [r.replayed, r.checkInId ?? r.entryId])).toEqual(retry.map((r) => [true, r.checkInId ?? r.entryId]));
  expect(await entriesOf('77.5')).toEqual([entryId]);
});

test('given an item recorded ahead of the server by an hour, it is refused with what to do, and the rest of the batch is recorded', async () => {
  const body = batch('31.5');
  // An hour ahead of the server: a phone whose clock is set wrong.
  const ahead = { ...body.items[1], idempotencyKey: randomUUID(), recordedAt: new Date(Date.now() + 60 * 60_000).toISOString(), quantities: [{ quantity: '41.5', unit: 'g' }] };
  const results = await send({ ...body, items: [...body.items, ahead] });
  expect(results.map((r) => r.status)).toEqual(['recorded', 'recorded', 'refused']);
  expect((results[2] as Result & { message?: string }).message).toMatch(/^Your phone's clock is ahead of the real time by about (59|60) minutes; set it to automatic time and send again\.$/);
  expect(await entriesOf('41.5')).toEqual([]);
});

test('given a malformed item among good ones, it alone is refused with what is wrong, and the others are recorded', async () => {
  const body = batch('12.75');
  const malformed = { ...body.items[1], idempotencyKey: randomUUID(), quantities: [{ quantity: '-3', unit: 'g' }] };
  const results = await send({ ...body, items: [malformed, ...body.items] });
  expect(results.map((r) => r.status)).toEqual(['refused', 'recorded', 'recorded']);
  expect((results[0] as Result & { message?: string }).message).toBe('This was not saved (quantities.0.quantity): A quantity cannot be negative; to reverse an entry, correct it from My ledger.');
  expect(await entriesOf('12.75')).toEqual([results[2]?.entryId]);
});

test('given a batch a phone kept for another account, it is refused as a whole and nothing of it is written', async () => {
  const body = { ...batch('13.25'), foragerId: await idOf(walter) };
  const response = await forager.post('/api/field/sync', { data: body });
  expect(response.status()).toBe(409);
  expect((await response.json()).error).toMatchObject({ code: 'other-forager', field: 'foragerId', message: expect.stringMatching(/^These were recorded on this phone by another account, so nothing was saved\./) });
  expect(await entriesOf('13.25')).toEqual([]);
});

test('given a body that is not a batch, it is a 400 naming the field, like every endpoint', async () => {
  const response = await forager.post('/api/field/sync', { data: { foragerId, packAsOf: minutesAgo(60), items: [] } });
  expect(response.status()).toBe(400);
  expect((await response.json()).error).toMatchObject({ code: 'invalid-input', field: 'items', message: 'Send at least one item.' });
});

/**
 * Two members of the demo club (data/demo/clubs.json: Beth Lindqvist, and Marisol Kent, steward@, who
 * stewards it and forages in it too) each record 300 g offline under a club permit capped at 500 g for the club's
 * season: each fits on the phone, together they do not.
 */
test.describe('two members over the club season once both are counted', () => {
  const clubWest = -72.95;
  const clubSouth = 43.85;
  const spot = { longitude: clubWest + size / 2, latitude: clubSouth + size / 2, accuracyM: 5, source: 'gps' };
  let beth: APIRequestContext;
  let steward: APIRequestContext;
  let clubGrantedAt = 0;
  let clubParcel = '';
  let clubParcelName = '';
  let clubId = '';

  test.beforeAll(async () => {
    [beth, steward] = await Promise.all([apiAs('beth.lindqvist@example.org'), apiAs('steward@example.org')]);
    clubId = ((await (await steward.get('/api/me')).json()) as { stewardOfClubIds: string[] }).stewardOfClubIds[0] ?? '';
    clubParcelName = `Sync club lot ${Date.now()}`;
    const ring = [[clubWest, clubSouth], [clubWest + size, clubSouth], [clubWest + size, clubSouth + size], [clubWest, clubSouth + size], [clubWest, clubSouth]];
    const created = await walter.post('/api/parcels', { data: { name: clubParcelName, timeZone: 'America/New_York', nearingThresholdPercent: 80, openToRequests: false, description: '', boundary: { type: 'Polygon', coordinates: [ring] } } });
    expect(created.status(), await created.text()).toBe(201);
    clubParcel = (await created.json()).parcel.id as string;
    const allowed = await walter.put(`/api/parcels/${clubParcel}/allowances`, { data: { speciesId: oysterId, seasons: [{ start: '01-01', end: '12-31' }], methods: ['pick'], limits: [{ scope: 'day', quantity: '5', unit: 'kg' }] } });
    expect(allowed.status(), await allowed.text()).toBe(200);
    const granted = await walter.post(`/api/parcels/${clubParcel}/permits`, {
      data: { holder: { kind: 'club', clubId }, startsOn: '2020-01-01', endsOn: '2099-12-31', limits: [{ speciesId: oysterId, scope: 'club-season', quantity: '500', unit: 'g' }] },
    });
    expect(granted.status(), await granted.text()).toBe(201);
    clubGrantedAt = Date.now();
  });

  test.afterAll(async () => Promise.all([beth, steward].map((c) => c?.dispose())));

  const entry = (foragerOf: string) => ({
    foragerId: foragerOf,
    packAsOf: after(clubGrantedAt, 1),
    items: [{ kind: 'entry', idempotencyKey: randomUUID(), recordedAt: after(clubGrantedAt, 2), position: spot, parcelId: clubParcel, speciesId: oysterId, method: 'pick', quantities: [{ quantity: '300', unit: 'g' }], acknowledgeOver: false }],
  });
  const syncAs = async (client: APIRequestContext, body: unknown) => {
    const response = await client.post('/api/field/sync', { data: body });
    expect(response.status(), await response.text()).toBe(200);
    return ((await response.json()) as { results: (Result & { flag?: { kind: string; message: string } })[] }).results;
  };

  test('given the second to sync, it is recorded and flagged over on sync, and the landowner and the steward are told by e-mail', async () => {
    const [first] = await syncAs(beth, entry(await idOf(beth)));
    expect(first).toMatchObject({ status: 'recorded', replayed: false });
    const [second] = await syncAs(steward, entry(await idOf(steward)));
    expect(second).toMatchObject({ status: 'flagged', replayed: false, flag: { kind: 'over-on-sync' } });
    expect(second?.flag?.message).toMatch(/^Over on sync: recorded offline within the device's tallies, over once others' entries were counted/);
    for (const email of ['landowner@example.org', 'steward@example.org']) {
      await expect
        .poll(async () => (await mailFor(walter, email)).filter((m) => m.subject === `Limit went over on sync on ${clubParcelName}`).length, { message: `the mail to ${email}` })
        .toBe(1);
    }
    const { flags } = (await (await steward.get(`/api/clubs/${clubId}/flags`)).json()) as { flags: { kind: string; entry: { id: string } }[] };
    expect(flags.find((f) => f.entry.id === second?.entryId)?.kind).toBe('over-on-sync');
  });
});
