import { expect, test, type APIRequestContext } from '@playwright/test';
import { apiAs } from './support';

/**
 * What the API tells about other people's parcels, against the seeded demo (data/demo): Hosmer Back
 * Forty is the draft of Dale Hosmer, who is not verified; Alder Bottom is Walter's listed parcel that
 * takes no requests, on which Beth holds a permit that has not begun (data/demo/scenario.json) and
 * Owen holds none. A boundary check names only the landowner's own parcels; a check-in answers only
 * with parcels the forager may know of.
 */
type Position = { longitude: number; latitude: number };
/**
 * Well inside each parcel's ring in data/demo/parcels.geojson, about 150 m or more from its edges, and
 * in Alder Bottom over 250 m west of its no-harvest zone (data/demo/zones.geojson).
 */
const inHosmer: Position = { longitude: -72.825, latitude: 43.9528 };
const inAlder: Position = { longitude: -72.854, latitude: 43.9447 };
/** A probing square of 0.0004° (about 32 m × 44 m) round a position. */
const probe = ({ longitude, latitude }: Position, d = 0.0002) => ({
  type: 'Polygon' as const,
  coordinates: [[[longitude - d, latitude - d], [longitude + d, latitude - d], [longitude + d, latitude + d], [longitude - d, latitude + d], [longitude - d, latitude - d]]],
});

let walter: APIRequestContext;
let june: APIRequestContext;
let owen: APIRequestContext;
let beth: APIRequestContext;
let alderId = '';

test.beforeAll(async () => {
  [walter, june, owen, beth] = await Promise.all(['landowner@example.org', 'june.farrand@example.org', 'forager@example.org', 'beth.lindqvist@example.org'].map(apiAs));
  const { parcels } = (await (await walter.get('/api/parcels')).json()) as { parcels: { id: string; name: string }[] };
  alderId = parcels.find((p) => p.name === 'Alder Bottom')?.id ?? '';
  expect(alderId).not.toBe('');
});

test.afterAll(async () => Promise.all([walter, june, owen, beth].map((c) => c?.dispose())));

type Checked = { features: { ok: boolean; warnings: { code: string; message: string; parcels?: { parcelId: string; name: string; overlapM2: number }[] }[] }[] };
const checkBoundary = async (client: APIRequestContext, geometry: ReturnType<typeof probe>) => {
  const response = await client.post('/api/boundaries/check', { data: { geometry } });
  expect(response.status(), await response.text()).toBe(200);
  return { text: await response.text(), body: (await response.json()) as Checked };
};

test("given a probing square inside another owner's draft, the boundary check warns of nothing", async () => {
  const { body } = await checkBoundary(june, probe(inHosmer));
  expect(body.features).toEqual([expect.objectContaining({ ok: true, warnings: [] })]);
});

test("given a probing square inside another owner's listed parcel, the warning names no parcel and gives no id or area", async () => {
  const { text, body } = await checkBoundary(june, probe(inAlder));
  const [feature] = body.features;
  expect(feature?.warnings).toEqual([{ code: 'overlap', message: expect.stringContaining('overlaps land registered by someone else') }]);
  expect(feature?.warnings[0]?.message).not.toMatch(/\d/);
  expect(text).not.toContain('Alder Bottom');
  expect(text).not.toContain(alderId);
});

test("given the same square, its owner's check names Alder Bottom and the area shared", async () => {
  const { body } = await checkBoundary(walter, probe(inAlder));
  const [feature] = body.features;
  // Other specs may have drawn Walter's own test lots here too: Alder Bottom must be among the parcels named.
  expect(feature?.warnings).toEqual([
    { code: 'overlap-own', message: expect.stringMatching(/your parcels? .*“Alder Bottom” by/), parcels: expect.arrayContaining([{ parcelId: alderId, name: 'Alder Bottom', overlapM2: expect.any(Number) }]) },
  ]);
  const alder = feature?.warnings[0]?.parcels?.find((p: { parcelId: string }) => p.parcelId === alderId);
  expect(alder?.overlapM2).toBeGreaterThan(1_000);
});

type Answer = { verdict: string; reasons: string[]; parcel: { id: string; name: string } | null; distanceToEdgeM: number | null; visitId: string | null };
const checkIn = async (client: APIRequestContext, at: Position, accuracyM: number) => {
  const response = await client.post('/api/check-ins', { data: { ...at, accuracyM } });
  expect(response.status(), await response.text()).toBe(200);
  return { text: await response.text(), answer: (await response.json()) as Answer };
};

test("given a forager inside another owner's draft, the check-in is outside and names nothing", async () => {
  const { text, answer } = await checkIn(owen, inHosmer, 5);
  expect(answer).toMatchObject({ verdict: 'outside', parcel: null, distanceToEdgeM: null, visitId: null });
  expect(text).not.toContain('Hosmer');
});

test('given a forager inside a listed parcel that takes no requests and holds no permit there, the check-in names nothing', async () => {
  const { text, answer } = await checkIn(owen, inAlder, 5);
  expect(answer).toMatchObject({ verdict: 'outside', parcel: null, distanceToEdgeM: null, visitId: null });
  expect(text).not.toContain('Alder Bottom');
});

test('given a 5 km fix there, a parcel may be named only if the forager may know of it', async () => {
  const { text, answer } = await checkIn(owen, inAlder, 5000);
  expect(text).not.toContain('Alder Bottom');
  expect(text).not.toContain('Hosmer');
  // Owen may know of the parcels open to requests and those he holds permits on: the nearest of those is named.
  expect(answer.verdict).toBe('edge');
  expect(['Pelletier Hill Farm', 'Farrand Sugarbush', 'Cobble Ridge Lot', 'Farrand Woodlots']).toContain(answer.parcel?.name);
});

test('given the holder of a permit on that parcel, the check-in still finds it and says why she may not harvest yet', async () => {
  const { answer } = await checkIn(beth, inAlder, 5);
  expect(answer).toMatchObject({ verdict: 'no-permit', parcel: { id: alderId, name: 'Alder Bottom' }, visitId: null });
  expect(answer.reasons.join(' ')).toContain('Alder Bottom');
});

test('given the OpenAPI document, it says what overlap warnings and check-ins may tell', async ({ request }) => {
  const doc = await (await request.get('/api/openapi.json')).json();
  expect(doc.paths['/api/boundaries/check'].post.description).toContain('land registered by someone else');
  expect(doc.paths['/api/check-ins'].post.description).toContain('parcels you may know of');
});
