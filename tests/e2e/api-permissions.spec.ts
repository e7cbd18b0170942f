import { expect, test, type APIRequestContext } from '@playwright/test';
import { apiAs } from './support';

/** Each endpoint answers through the one permission table: 401 signed out, 403 wrong role, 404 someone else's. */
let forager: APIRequestContext;
let walter: APIRequestContext;
let june: APIRequestContext;

test.beforeAll(async () => {
  [forager, walter, june] = await Promise.all(['forager@example.org', 'landowner@example.org', 'june.farrand@example.org'].map(apiAs));
});

test.afterAll(async () => {
  await Promise.all([forager, walter, june].map((c) => c?.dispose()));
});

test('given no session, API calls get 401 with a code and message', async ({ request }) => {
  for (const path of ['/api/me', '/api/parcels']) {
    const response = await request.get(path);
    expect(response.status()).toBe(401);
    expect(await response.json()).toEqual({ error: { code: 'signed-out', message: 'Sign in to continue.' } });
  }
});

test('given a forager, a landowner-only endpoint answers 403', async () => {
  const response = await forager.get('/api/parcels');
  expect(response.status()).toBe(403);
  expect((await response.json()).error.code).toBe('forbidden');
});

test("given a landowner, another landowner's parcel answers 404 and their own answers 200", async () => {
  const own = (await (await walter.get('/api/parcels')).json()).parcels as { id: string; name: string }[];
  const others = (await (await june.get('/api/parcels')).json()).parcels as { id: string; name: string }[];
  expect(own.length).toBeGreaterThan(0);
  expect(others.length).toBeGreaterThan(0);
  const ownIds = new Set(own.map((p) => p.id));
  expect(others.some((p) => ownIds.has(p.id))).toBe(false);

  const mine = await walter.get(`/api/parcels/${own[0]?.id}`);
  expect(mine.status()).toBe(200);
  expect((await mine.json()).parcel.boundary.type).toBe('MultiPolygon');

  const theirs = await walter.get(`/api/parcels/${others[0]?.id}`);
  expect(theirs.status()).toBe(404);
  expect((await theirs.json()).error.code).toBe('not-found');
});

test('given a malformed parcel id, it answers 404 rather than a server error', async () => {
  expect((await walter.get('/api/parcels/not-a-uuid')).status()).toBe(404);
});

test('given a forager, the admin-only verification endpoint answers 403', async () => {
  const response = await forager.post('/api/accounts/anyone/verify-landowner');
  expect(response.status()).toBe(403);
});

test('given a forager, landowner pages show the not-for-your-account page', async ({ browser }) => {
  const context = await browser.newContext({ storageState: await forager.storageState() });
  const page = await context.newPage();
  const response = await page.goto('/land');
  expect(response?.status()).toBe(403);
  await expect(page.getByRole('heading', { name: 'This page is not for your account' })).toBeVisible();
  await context.close();
});

test('given a signed-out visitor, a guarded page sends them to sign in', async ({ page }) => {
  await page.goto('/land');
  await expect(page).toHaveURL(/\/sign-in\?next=%2Fland$/);
});

test('given the running app, health answers ready and nothing more: no versions, counts or error text for strangers', async ({ request }) => {
  const response = await request.get('/api/health');
  expect(response.status()).toBe(200);
  expect(await response.json()).toEqual({ ok: true, status: 'ready' });
});

test('given a bad JSON body at sign-in, it answers 400 naming the body', async ({ request }) => {
  const response = await request.post('/api/sign-in', { headers: { 'content-type': 'application/json' }, data: '{not json' });
  expect(response.status()).toBe(400);
  expect((await response.json()).error.field).toBe('body');
});
