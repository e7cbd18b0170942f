import { randomUUID } from 'node:crypto';
import { expect, test, type APIRequestContext } from '@playwright/test';
import { apiAs, mailFor } from './support';

/*
 * The counting model through the HTTP API, against the real server and database: a species limited
 * in two measures, dry and liquid volumes, a correction that takes its day over, a limit whose
 * measure may not change mid-season, and check-ins sent at once.
 *
 * Walter makes a parcel of his own for this file, clear of the demo valley and of the other specs'
 * parcels (club-api.spec.ts holds −72.970…−72.967, 43.870…43.873; this one −72.977…−72.974,
 * 43.862…43.865), with a nearing threshold of 80 %, and grants Hattie Brule a permit on it. Tally
 * states (GLOSSARY.md): within below the threshold, nearing at or past it, reached at exactly 100 %,
 * over past it.
 */
const west = -72.977;
const south = 43.862;
const size = 0.003;
const centre = { longitude: west + size / 2, latitude: south + size / 2 };
const parcelName = `Counting lot ${Date.now()}`;

type Tally = { scope: string; measure: string; limit: { quantity: string; unit: string }; used: string; remaining: string; percent: number; state: string };
type Entry = { id: string; breach: boolean; correctsEntryId: string | null };

let walter: APIRequestContext;
let hattie: APIRequestContext;
let parcelId = '';
let visitId = '';
const ids: Record<string, string> = {};
const oyster = { entry: '' };

test.describe.configure({ mode: 'serial' });

const allow = (speciesName: string, methods: string[], limits: { scope: string; quantity: string; unit: string }[]) =>
  walter.put(`/api/parcels/${parcelId}/allowances`, { data: { speciesId: ids[speciesName], seasons: [{ start: '01-01', end: '12-31' }], methods, limits } });

test.beforeAll(async () => {
  [walter, hattie] = await Promise.all([apiAs('landowner@example.org'), apiAs('hattie.brule@example.org')]);
  const ring = [[west, south], [west + size, south], [west + size, south + size], [west, south + size], [west, south]];
  const created = await walter.post('/api/parcels', { data: { name: parcelName, timeZone: 'America/New_York', nearingThresholdPercent: 80, openToRequests: false, description: '', boundary: { type: 'Polygon', coordinates: [ring] } } });
  expect(created.status(), await created.text()).toBe(201);
  parcelId = (await created.json()).parcel.id;
  const { species } = (await (await walter.get('/api/species')).json()) as { species: { id: string; commonName: string }[] };
  for (const s of species) ids[s.commonName] = s.id;

  // Quebec's personal limit for wild leek, 200 g or 50 plants per person per year (REFERENCES §7), as a season of the whole year.
  const leek = await allow('Wild leek (ramps)', ['dig'], [{ scope: 'season', quantity: '200', unit: 'g' }, { scope: 'season', quantity: '50', unit: 'plant' }]);
  expect(leek.status(), await leek.text()).toBe(200);
  const blueberry = await allow('Lowbush blueberry', ['pick'], [{ scope: 'day', quantity: '2', unit: 'us-dry-quart' }]);
  expect(blueberry.status(), await blueberry.text()).toBe(200);
  const oysters = await allow('Oyster mushroom', ['pick'], [{ scope: 'day', quantity: '500', unit: 'g' }]);
  expect(oysters.status(), await oysters.text()).toBe(200);

  const granted = await walter.post(`/api/parcels/${parcelId}/permits`, { data: { holder: { kind: 'forager', email: 'hattie.brule@example.org' }, startsOn: '2020-01-01', endsOn: '2099-12-31' } });
  expect(granted.status(), await granted.text()).toBe(201);
  const checkIn = await hattie.post('/api/check-ins', { data: { ...centre, accuracyM: 5 } });
  expect(checkIn.status(), await checkIn.text()).toBe(200);
  const answer = await checkIn.json();
  expect(answer).toMatchObject({ verdict: 'clear', parcel: { id: parcelId } });
  visitId = answer.visitId;
});

test.afterAll(async () => {
  // Archived, the parcel takes no more check-ins, so a later run in the same database finds only its own parcel here.
  await walter?.patch(`/api/parcels/${parcelId}`, { data: { status: 'archived' } });
  await Promise.all([walter, hattie].map((c) => c?.dispose()));
});

const harvest = (speciesName: string, method: string, quantities: { quantity: string; unit: string }[], extra: Record<string, unknown> = {}) => ({
  idempotencyKey: randomUUID(), visitId, speciesId: ids[speciesName], method, quantities, ...extra,
});
const record = (body: ReturnType<typeof harvest>) => hattie.post('/api/harvest-entries', { data: body });

/** Hattie's own ledger entries of one species on this parcel: what was saved. */
async function saved(speciesName: string) {
  const query = new URLSearchParams({ parcelId, speciesId: ids[speciesName] ?? '' });
  const response = await hattie.get(`/api/ledger?${query}`);
  expect(response.status()).toBe(200);
  return (await response.json()).entries as { id: string; quantities: { measure: string; quantity: string; unit: string }[] }[];
}

const row = (t: Tally) => [t.scope, t.measure, t.used, t.percent, t.state];

test('given a wild leek limit of 200 g or 50 plants a season (REFERENCES §7), an entry gives both, and one in grams only or in bulbs is refused with nothing saved', async () => {
  const gramsOnly = await record(harvest('Wild leek (ramps)', 'dig', [{ quantity: '150', unit: 'g' }]));
  expect(gramsOnly.status()).toBe(400);
  expect((await gramsOnly.json()).error.field).toBe('quantities');

  // A bulb is a third thing to count: the limits count grams and plants, never bulbs.
  const bulbs = await record(harvest('Wild leek (ramps)', 'dig', [{ quantity: '40', unit: 'bulb' }]));
  expect(bulbs.status()).toBe(400);
  expect((await bulbs.json()).error.field).toBe('unit');
  expect(await saved('Wild leek (ramps)')).toEqual([]);

  const both = await record(harvest('Wild leek (ramps)', 'dig', [{ quantity: '150', unit: 'g' }, { quantity: '30', unit: 'plant' }]));
  expect(both.status(), await both.text()).toBe(201);
  // 150 g of 200 g is 75 % and 30 of 50 plants is 60 %: both below the 80 % threshold, within.
  expect(((await both.json()).tallies as Tally[]).map(row)).toEqual([['season', 'mass', '150', 75, 'within'], ['season', 'plants', '30', 60, 'within']]);
  const entries = await saved('Wild leek (ramps)');
  expect(entries).toHaveLength(1);
  expect(entries[0]?.quantities.map((q) => [q.measure, q.quantity, q.unit])).toEqual([['mass', '150', 'g'], ['plants', '30', 'plant']]);
});

test('given a day limit of 2 US dry quarts, 3 dry pints are 75 % (within), a liquid pint more would be 96.5 % (nearing), and a dry pint more is 100 % (reached)', async () => {
  /*
   * NIST HB 44 App. C (REFERENCES §1): 1 US bushel = 2150.42 in³, a dry quart 1/32 bushel, a dry pint
   * 1/64, with 1 in³ = 16.387064 mL: a dry quart is 1101.220942715 mL, a dry pint 550.6104713575 mL.
   *   limit        2 dry quarts = 2 × 1101.220942715   = 2202.44188543 mL
   *   3 dry pints               = 3 × 550.6104713575   = 1651.8314140725 mL = 3/4 of the limit: 75 %, 1.5 dry quarts
   *   + 1 liquid pint (231/8 in³ = 473.176473 mL)      = 2125.0078870725 mL; ÷ 2202.44188543 = 0.964841…: 96.5 % (half up, one decimal)
   *   + 1 dry pint instead                             = 2202.44188543 mL = the limit exactly: 100 %, 2 dry quarts
   */
  const first = await record(harvest('Lowbush blueberry', 'pick', [{ quantity: '3', unit: 'us-dry-pint' }]));
  expect(first.status(), await first.text()).toBe(201);
  const [afterFirst] = (await first.json()).tallies as Tally[];
  expect(afterFirst).toMatchObject({ scope: 'day', measure: 'volume', limit: { quantity: '2', unit: 'us-dry-quart' }, used: '1.5', percent: 75, state: 'within' });

  const liquid = await hattie.post('/api/harvest-entries/preview', { data: harvest('Lowbush blueberry', 'pick', [{ quantity: '1', unit: 'us-pint' }]) });
  expect(liquid.status(), await liquid.text()).toBe(200);
  expect(((await liquid.json()).tallies as Tally[]).map((t) => [t.scope, t.percent, t.state])).toEqual([['day', 96.5, 'nearing']]);

  const second = await record(harvest('Lowbush blueberry', 'pick', [{ quantity: '1', unit: 'us-dry-pint' }]));
  expect(second.status(), await second.text()).toBe(201);
  const [afterSecond] = (await second.json()).tallies as Tally[];
  expect(afterSecond).toMatchObject({ scope: 'day', measure: 'volume', used: '2', remaining: '0', percent: 100, state: 'reached' });
});

test("given a correction that adds to today's entry past the day limit, it needs acknowledgeOver, is then a breach, and the landowner hears of it", async () => {
  // 400 g of a 500 g day limit: 80 %, at the threshold, nearing.
  const first = await record(harvest('Oyster mushroom', 'pick', [{ quantity: '400', unit: 'g' }]));
  expect(first.status(), await first.text()).toBe(201);
  oyster.entry = (await first.json()).entry.id;
  expect(((await first.json()).tallies as Tally[]).map(row)).toEqual([['day', 'mass', '400', 80, 'nearing']]);

  // Adding 150 g makes the day 550 g: 110 % of 500 g, over.
  const correction = (acknowledgeOver: boolean) => ({ idempotencyKey: randomUUID(), reason: 'Weighed at home: 550 g, not 400 g', quantities: [{ quantity: '150', unit: 'g' }], acknowledgeOver });
  const refused = await hattie.post(`/api/harvest-entries/${oyster.entry}/corrections`, { data: correction(false) });
  expect(refused.status()).toBe(409);
  expect((await refused.json()).error.code).toBe('would-go-over');
  expect((await saved('Oyster mushroom')).map((e) => e.id)).toEqual([oyster.entry]);

  const acknowledged = await hattie.post(`/api/harvest-entries/${oyster.entry}/corrections`, { data: correction(true) });
  expect(acknowledged.status(), await acknowledged.text()).toBe(201);
  const answer = await acknowledged.json();
  expect(answer.entry as Entry).toMatchObject({ breach: true, correctsEntryId: oyster.entry });
  expect((answer.tallies as Tally[]).map(row)).toEqual([['day', 'mass', '550', 110, 'over']]);
  expect(await saved('Oyster mushroom')).toHaveLength(2);

  await expect
    .poll(async () => (await mailFor(walter, 'landowner@example.org')).find((m) => m.subject === `Limit breached on ${parcelName}`)?.text ?? '', { message: 'the breach e-mail to the landowner' })
    .toMatch(/corrected their entry of Oyster mushroom .* by \+150 g/);
});

test('given entries counting in grams this season, changing the limits to US cups answers 409 measure-in-use and the allowance still counts grams', async () => {
  const toCups = await allow('Oyster mushroom', ['pick'], [{ scope: 'day', quantity: '2', unit: 'us-cup' }]);
  expect(toCups.status()).toBe(409);
  expect((await toCups.json()).error).toMatchObject({ code: 'measure-in-use', field: 'limits' });

  const inCups = await hattie.post('/api/harvest-entries/preview', { data: harvest('Oyster mushroom', 'pick', [{ quantity: '1', unit: 'us-cup' }]) });
  expect(inCups.status()).toBe(400);
  expect((await inCups.json()).error.field).toBe('unit');
  const inGrams = await hattie.post('/api/harvest-entries/preview', { data: harvest('Oyster mushroom', 'pick', [{ quantity: '1', unit: 'g' }]) });
  expect(inGrams.status(), await inGrams.text()).toBe(200);
  // Still the 500 g day limit: 550 g taken (the entry and its correction) and this 1 g make 551 g.
  expect(((await inGrams.json()).tallies as Tally[]).map((t) => [t.scope, t.limit.quantity, t.limit.unit, t.used])).toEqual([['day', '500', 'g', '551']]);

  // The amount may change in the same measure at any time: 600 g a day.
  const moreGrams = await allow('Oyster mushroom', ['pick'], [{ scope: 'day', quantity: '600', unit: 'g' }]);
  expect(moreGrams.status(), await moreGrams.text()).toBe(200);
});

test('given ten check-ins sent at once by one forager, each answers 200 and every clear answer names the same one new visit', async () => {
  const out = await hattie.post(`/api/visits/${visitId}/check-out`);
  expect(out.status(), await out.text()).toBe(200);

  const responses = await Promise.all(Array.from({ length: 10 }, () => hattie.post('/api/check-ins', { data: { ...centre, accuracyM: 5 } })));
  expect(responses.map((r) => r.status())).toEqual(Array(10).fill(200));
  const answers = (await Promise.all(responses.map((r) => r.json()))) as { verdict: string; parcel: { id: string } | null; visitId: string | null }[];
  expect(answers.map((a) => [a.verdict, a.parcel?.id])).toEqual(Array(10).fill(['clear', parcelId]));
  const visits = new Set(answers.filter((a) => a.verdict === 'clear').map((a) => a.visitId));
  expect(visits.size).toBe(1);
  const [visit] = [...visits];
  expect(visit).toEqual(expect.any(String));
  expect(visit).not.toBe(visitId);

  // The checked-out visit is over: recording into it is refused.
  const late = await record(harvest('Oyster mushroom', 'pick', [{ quantity: '1', unit: 'g' }]));
  expect(late.status()).toBe(409);
  expect((await late.json()).error.code).toBe('visit-ended');
});
