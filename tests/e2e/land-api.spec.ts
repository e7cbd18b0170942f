import { expect, test, type APIRequestContext } from '@playwright/test';
import { apiAs } from './support';

/** The land API against the running server and the seeded demo (data/demo). */
let walter: APIRequestContext;
let june: APIRequestContext;
let forager: APIRequestContext;
let walterParcelId = '';

/** A small square (about 110 m a side) west of the demo valley, clear of every demo parcel. */
const square = (west: number, south: number, size = 0.001) => ({
  type: 'Polygon' as const,
  coordinates: [[[west, south], [west + size, south], [west + size, south + size], [west, south + size], [west, south]]],
});
const settings = { name: 'API test lot', timeZone: 'America/New_York', nearingThresholdPercent: 80, openToRequests: false, description: '' };

test.beforeAll(async () => {
  [walter, june, forager] = await Promise.all(['landowner@example.org', 'june.farrand@example.org', 'forager@example.org'].map(apiAs));
  const created = await walter.post('/api/parcels', { data: { ...settings, boundary: square(-72.95, 43.9) } });
  expect(created.status(), await created.text()).toBe(201);
  walterParcelId = (await created.json()).parcel.id;
});

test.afterAll(async () => Promise.all([walter, june, forager].map((c) => c?.dispose())));

async function parcelCount(client: APIRequestContext) {
  return ((await (await client.get('/api/parcels')).json()).parcels as unknown[]).length;
}

test('given a new parcel, its area is the geodesic area PostGIS computes (≈ 0.9 ha for 0.001° at 43.9°N)', async () => {
  const { parcel } = await (await walter.get(`/api/parcels/${walterParcelId}`)).json();
  // 0.001° of latitude ≈ 111.1 m and of longitude ≈ 111.3 m × cos 43.9° ≈ 80.2 m (WGS 84, from memory ✱): ≈ 8 900 m².
  expect(parcel.areaM2).toBeGreaterThan(8_800);
  expect(parcel.areaM2).toBeLessThan(9_000);
});

test("given Walter's demo parcels, the list counts each parcel's own active permits", async () => {
  const { parcels } = (await (await walter.get('/api/parcels')).json()) as { parcels: { name: string; activePermits: number }[] };
  // data/demo/scenario.json: Owen Marsh holds the one active permit on Cobble Ridge Lot; Alder Bottom has none active.
  expect(parcels.find((p) => p.name === 'Cobble Ridge Lot')?.activePermits).toBe(1);
  expect(parcels.find((p) => p.name === 'Alder Bottom')?.activePermits).toBe(0);
});

test('given a new parcel with no allowance and no terms, opening it to requests is refused with a sentence naming both; with them, it opens', async () => {
  const early = await walter.post('/api/parcels', { data: { ...settings, name: 'Opened too soon', openToRequests: true, boundary: square(-72.95, 43.95) } });
  expect(early.status()).toBe(409);
  expect((await early.json()).error).toMatchObject({ code: 'not-ready-for-requests', field: 'openToRequests' });

  const refused = await walter.patch(`/api/parcels/${walterParcelId}`, { data: { openToRequests: true } });
  expect(refused.status()).toBe(409);
  const { error } = await refused.json();
  expect(error.field).toBe('openToRequests');
  expect(error.message).toMatch(/^Before foragers can ask for access, the parcel needs an allowance.*and terms/);
  expect((await (await walter.get(`/api/parcels/${walterParcelId}`)).json()).parcel.openToRequests).toBe(false);

  const allowed = await walter.post(`/api/parcels/${walterParcelId}/allowances`, { data: { speciesId: await firstSpeciesId(), seasons: [{ start: '01-01', end: '12-31' }], methods: ['pick'], limits: [] } });
  expect(allowed.status(), await allowed.text()).toBe(201);
  const termsOnly = await walter.patch(`/api/parcels/${walterParcelId}`, { data: { openToRequests: true } });
  expect(termsOnly.status()).toBe(409);
  expect((await termsOnly.json()).error.message).not.toContain('an allowance');
  const terms = await walter.post(`/api/parcels/${walterParcelId}/terms`, { data: { body: 'Pick by hand and close every gate behind you.' } });
  expect(terms.status(), await terms.text()).toBeLessThan(300);
});

test('given only a new boundary, the parcel keeps its description and its openness to requests', async () => {
  const set = await walter.patch(`/api/parcels/${walterParcelId}`, { data: { description: 'Oak and hickory on the west slope.', openToRequests: true } });
  expect(set.status(), await set.text()).toBe(200);
  const moved = await walter.patch(`/api/parcels/${walterParcelId}`, { data: { boundary: square(-72.95, 43.9, 0.0011) } });
  expect(moved.status(), await moved.text()).toBe(200);
  const { parcel } = await (await walter.get(`/api/parcels/${walterParcelId}`)).json();
  expect(parcel).toMatchObject({ description: 'Oak and hickory on the west slope.', openToRequests: true });
});

test('given a self-crossing bow-tie, it answers 400 saying where the boundary crosses itself', async () => {
  const before = await parcelCount(walter);
  const bowTie = { type: 'Polygon', coordinates: [[[-72.95, 43.91], [-72.949, 43.912], [-72.95, 43.912], [-72.949, 43.91], [-72.95, 43.91]]] };
  const response = await walter.post('/api/parcels', { data: { ...settings, boundary: bowTie } });
  expect(response.status()).toBe(400);
  const { error } = await response.json();
  expect(error.field).toBe('boundary');
  expect(error.message.toLowerCase()).toContain('cross');
  expect(await parcelCount(walter)).toBe(before);
});

test('given a polygon with 10 001 vertices, it answers 400 naming the cap; with 100 000 (4 MB) the body is refused at 413 before it is read whole; nothing is saved', async () => {
  const before = await parcelCount(walter);
  const circle = (corners: number) => {
    const ring = Array.from({ length: corners }, (_, i) => {
      const a = (2 * Math.PI * i) / corners;
      return [-72.96 + 0.002 * Math.cos(a), 43.92 + 0.002 * Math.sin(a)];
    });
    ring.push(ring[0] as number[]);
    return { ...settings, boundary: { type: 'Polygon', coordinates: [ring] } };
  };
  const overCap = await walter.post('/api/parcels', { data: circle(10_001) });
  expect(overCap.status()).toBe(400);
  expect((await overCap.json()).error.message).toMatch(/10,002 points; the most we accept is 10,000/);
  const huge = await walter.post('/api/parcels', { data: circle(100_000) });
  expect(huge.status()).toBe(413);
  expect((await huge.json()).error.message).toMatch(/larger than 2 MB/);
  expect(await parcelCount(walter)).toBe(before);
});

test('given a 20 MB upload, the boundary check refuses it with 413 and a reason', async () => {
  const big = Buffer.alloc(20 * 1024 * 1024, 32);
  const response = await walter.post('/api/boundaries/check', { multipart: { file: { name: 'huge.geojson', mimeType: 'application/geo+json', buffer: big } } });
  expect(response.status()).toBe(413);
  expect((await response.json()).error.message).toContain('MB');
});

test('given a file that is not GeoJSON, KML or GPX, it answers 400 listing the formats it reads', async () => {
  const response = await walter.post('/api/boundaries/check', { multipart: { file: { name: 'notes.csv', mimeType: 'text/csv', buffer: Buffer.from('name,lat,lon\nspring,43.9,-72.8\n') } } });
  expect(response.status()).toBe(400);
  const { error } = await response.json();
  expect(error.message).toMatch(/GeoJSON/);
  expect(error.message).toMatch(/KML/);
});

test('given a negative limit or an unknown unit, the allowance is refused with the field named and nothing saved', async () => {
  const speciesId = await firstSpeciesId();
  const base = { speciesId, seasons: [{ start: '11-01', end: '03-15' }], methods: ['strip'] };
  const negative = await walter.put(`/api/parcels/${walterParcelId}/allowances`, { data: { ...base, limits: [{ scope: 'visit', quantity: '-5', unit: 'g' }] } });
  expect(negative.status()).toBe(400);
  expect((await negative.json()).error).toMatchObject({ field: 'limits.0.quantity', message: 'A limit must be more than zero.' });
  const unknown = await walter.put(`/api/parcels/${walterParcelId}/allowances`, { data: { ...base, limits: [{ scope: 'visit', quantity: '5', unit: 'bushel-ish' }] } });
  expect(unknown.status()).toBe(400);
  expect((await unknown.json()).error.message).toContain('Unknown unit "bushel-ish"');
  const { permits } = await (await walter.get(`/api/parcels/${walterParcelId}/permits`)).json();
  expect(permits).toEqual([]);
});

async function firstSpeciesId(): Promise<string> {
  const { species } = (await (await walter.get('/api/species')).json()) as { species: { id: string }[] };
  expect(species.length).toBeGreaterThanOrEqual(25);
  return species[0]?.id ?? '';
}

test("given another landowner, every endpoint of Walter's parcel answers 404", async () => {
  const id = walterParcelId;
  const zero = '00000000-0000-4000-8000-000000000000';
  const calls = [
    june.get(`/api/parcels/${id}`),
    june.patch(`/api/parcels/${id}`, { data: { name: 'Taken over' } }),
    june.get(`/api/parcels/${id}/permits`),
    june.post(`/api/parcels/${id}/permits`, { data: { holder: { kind: 'forager', email: 'x@example.org' }, startsOn: '2027-01-01', endsOn: '2027-12-31' } }),
    june.post(`/api/parcels/${id}/closures`, { data: { startsOn: '2027-01-01', endsOn: '2027-01-02', reason: 'x' } }),
    june.post(`/api/parcels/${id}/hazards`, { data: { kind: 'other', title: 'x' } }),
    june.post(`/api/parcels/${id}/terms`, { data: { body: 'These are not my terms to publish at all.' } }),
    june.put(`/api/parcels/${id}/allowances`, { data: { speciesId: zero, seasons: [{ start: '01-01', end: '12-31' }], methods: ['pick'], limits: [] } }),
    june.post(`/api/parcels/${id}/zones`, { data: { name: 'x', boundary: square(-72.9495, 43.9005, 0.0002) } }),
    june.delete(`/api/parcels/${id}/closures/${zero}`),
  ];
  for (const response of await Promise.all(calls)) {
    expect(response.status(), response.url()).toBe(404);
  }
  const { parcel } = await (await walter.get(`/api/parcels/${id}`)).json();
  expect(parcel.name).toBe('API test lot');
});

test("given another landowner, Walter's permits and requests answer 404", async () => {
  const walterParcels = (await (await walter.get('/api/parcels')).json()).parcels as { id: string }[];
  for (const p of walterParcels) {
    const list = (await (await walter.get(`/api/parcels/${p.id}/permits`)).json()).permits as { id: string; holderEmail: string | null }[];
    // June holds a permit on one of Walter's parcels (data/demo/scenario.json); as its holder she may read that one.
    for (const permit of list.filter((l) => l.holderEmail !== 'june.farrand@example.org').slice(0, 3)) {
      expect((await june.get(`/api/permits/${permit.id}`)).status()).toBe(404);
      expect((await june.post(`/api/permits/${permit.id}/decision`, { data: { decision: 'approve' } })).status()).toBe(404);
      expect((await june.post(`/api/permits/${permit.id}/revoke`, { data: { reason: 'not mine' } })).status()).toBe(404);
    }
  }
});

test('given a forager, granting a permit answers 403', async () => {
  const response = await forager.post(`/api/parcels/${walterParcelId}/permits`, { data: { holder: { kind: 'forager', email: 'x@example.org' }, startsOn: '2027-01-01', endsOn: '2027-12-31' } });
  expect(response.status()).toBe(403);
});

test('given the OpenAPI document, it is 3.1 and describes the allowance body from its schema', async ({ request }) => {
  const doc = await (await request.get('/api/openapi.json')).json();
  expect(doc.openapi).toBe('3.1.0');
  const body = doc.paths['/api/parcels/{id}/allowances'].put.requestBody.content['application/json'].schema;
  expect(body.required).toEqual(expect.arrayContaining(['speciesId', 'seasons', 'methods', 'limits']));
});

test('given a permit, its own limit may tighten the parcel limit across units but never loosen it', async () => {
  const speciesId = await firstSpeciesId();
  const allowance = await walter.put(`/api/parcels/${walterParcelId}/allowances`, {
    data: { speciesId, seasons: [{ start: '01-01', end: '12-31' }], methods: ['pick'], limits: [{ scope: 'day', quantity: '1', unit: 'kg' }] },
  });
  expect(allowance.status(), await allowance.text()).toBe(200);
  const granted = await walter.post(`/api/parcels/${walterParcelId}/permits`, { data: { holder: { kind: 'forager', email: 'beth.lindqvist@example.org' }, startsOn: '2027-01-01', endsOn: '2027-12-31' } });
  expect(granted.status(), await granted.text()).toBe(201);
  const permitId = (await granted.json()).permit.id as string;

  // 1 lb = 0.45359237 kg exactly (1959 agreement, REFERENCES §1): 2.3 lb = 1.043262451 kg > 1 kg, 2.2 lb = 0.997903214 kg < 1 kg.
  const looser = await walter.post(`/api/permits/${permitId}/limits`, { data: { speciesId, scope: 'day', quantity: '2.3', unit: 'lb' } });
  expect(looser.status()).toBe(400);
  expect((await looser.json()).error).toMatchObject({ field: 'limits.0.quantity' });
  const tighter = await walter.post(`/api/permits/${permitId}/limits`, { data: { speciesId, scope: 'day', quantity: '2.2', unit: 'lb' } });
  expect(tighter.status(), await tighter.text()).toBe(201);
  // The parcel weighs this species; a litre is a volume, another measure, so the permit may not limit it in litres.
  const otherMeasure = await walter.post(`/api/permits/${permitId}/limits`, { data: { speciesId, scope: 'visit', quantity: '1', unit: 'L' } });
  expect(otherMeasure.status()).toBe(400);
  const { error } = await otherMeasure.json();
  expect(error.field).toBe('limits.0.unit');
  expect(error.message).toContain('g, kg, oz or lb');
  const clubCap = await walter.post(`/api/permits/${permitId}/limits`, { data: { speciesId, scope: 'club-season', quantity: '5', unit: 'kg' } });
  expect(clubCap.status()).toBe(400);
  expect((await clubCap.json()).error.message).toContain('club permit');
});

test('given an allowance, adding the species again is a 409 naming the allowance; changing it in place is recorded in the history', async () => {
  const { species } = (await (await walter.get('/api/species')).json()) as { species: { id: string; commonName: string }[] };
  const chaga = species.find((s) => s.commonName === 'Chaga');
  expect(chaga).toBeTruthy();
  const body = { speciesId: chaga?.id, seasons: [{ start: '11-01', end: '03-15' }], methods: ['strip'], limits: [{ scope: 'visit', quantity: '250', unit: 'g' }] };
  const added = await walter.post(`/api/parcels/${walterParcelId}/allowances`, { data: body });
  expect(added.status(), await added.text()).toBe(201);
  const allowanceId = (await added.json()).allowance.id as string;

  const again = await walter.post(`/api/parcels/${walterParcelId}/allowances`, { data: { ...body, limits: [{ scope: 'visit', quantity: '9', unit: 'kg' }] } });
  expect(again.status()).toBe(409);
  const { error } = await again.json();
  expect(error).toMatchObject({ code: 'allowance-exists', field: 'speciesId', details: { allowanceId } });
  expect(error.message).toContain('Chaga already has an allowance');

  const changed = await walter.put(`/api/parcels/${walterParcelId}/allowances/${allowanceId}`, { data: { ...body, limits: [{ scope: 'visit', quantity: '0.5', unit: 'kg' }] } });
  expect(changed.status(), await changed.text()).toBe(200);
  const { history } = (await (await walter.get(`/api/parcels/${walterParcelId}/history`)).json()) as { history: { action: string; summary: string }[] };
  expect(history[0]).toMatchObject({ action: 'allowance.changed', summary: 'Changed the allowance for Chaga: limit 250 g a visit → 0.5 kg a visit.' });
  expect(history.some((h) => h.action === 'allowance.added' && h.summary.startsWith('Allowed Chaga: Nov 1 – Mar 15, across New Year'))).toBe(true);

  // Another owner sees neither the allowance nor the history.
  expect((await june.put(`/api/parcels/${walterParcelId}/allowances/${allowanceId}`, { data: body })).status()).toBe(404);
  expect((await june.get(`/api/parcels/${walterParcelId}/history`)).status()).toBe(404);
});

test('given a fee in dollars, a grant stores its cents; three decimals or words are refused beside the fee field', async () => {
  const grant = (fee: unknown) => walter.post(`/api/parcels/${walterParcelId}/permits`, { data: { holder: { kind: 'forager', email: 'hattie.brule@example.org' }, startsOn: '2027-03-01', endsOn: '2027-03-31', fee } });
  for (const bad of ['12.505', 'abc']) {
    const refused = await grant(bad);
    expect(refused.status()).toBe(400);
    const { error } = await refused.json();
    expect(error.field).toBe('fee');
    expect(error.message).toMatch(/\.$/);
  }
  const granted = await grant('12.50');
  expect(granted.status(), await granted.text()).toBe(201);
  const permitId = (await granted.json()).permit.id;
  const { permits } = (await (await walter.get(`/api/parcels/${walterParcelId}/permits`)).json()) as { permits: { id: string; feeMinor: number | null }[] };
  // $12.50 is 1250 cents.
  expect(permits.find((p) => p.id === permitId)?.feeMinor).toBe(1250);
});
