import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { expect, test, type APIRequestContext, type Page } from '@playwright/test';
import { apiAs, sessionFile } from './support';

/**
 * A permit card as a warden checks it: the forager opens the card, the warden's page verifies its
 * signed code on the device and asks Tallywood whether the permit still stands; revoked, it says so;
 * with no network, the signature still verifies and the page says it could not ask. The parcel and the
 * permit are made through the API, so nothing depends on the demo's dates.
 */
const name = `Card test lot ${Date.now()}`;
const west = -72.91;
const south = 43.97;
const size = 0.003;
const screens = join(import.meta.dirname, '..', '..', '.local', 'screens');

let walter: APIRequestContext;
let permitId = '';
/** The code of an active permit's card, kept by the screenshot test for the warden's phone below. */
let activeToken = '';

/** A day on the parcel's calendar, written as the app writes dates ("Dec 2, 2026"), from the IANA tz data. */
const parcelDay = (date: Date) => new Intl.DateTimeFormat('en-US', { timeZone: 'America/New_York', year: 'numeric', month: 'short', day: 'numeric' }).format(date);
const parcelDate = (date: Date) => new Intl.DateTimeFormat('en-CA', { timeZone: 'America/New_York', year: 'numeric', month: '2-digit', day: '2-digit' }).format(date);

test.describe.configure({ mode: 'serial' });

test.beforeAll(async () => {
  walter = await apiAs('landowner@example.org');
  const ring = [[west, south], [west + size, south], [west + size, south + size], [west, south + size], [west, south]];
  const created = await walter.post('/api/parcels', { data: { name, timeZone: 'America/New_York', nearingThresholdPercent: 80, openToRequests: false, description: '', boundary: { type: 'Polygon', coordinates: [ring] } } });
  expect(created.status(), await created.text()).toBe(201);
  const parcelId = (await created.json()).parcel.id as string;
  const { species } = (await (await walter.get('/api/species')).json()) as { species: { id: string; commonName: string }[] };
  const oyster = species.find((s) => s.commonName === 'Oyster mushroom');
  const allowed = await walter.put(`/api/parcels/${parcelId}/allowances`, {
    data: { speciesId: oyster?.id, seasons: [{ start: '01-01', end: '12-31' }], methods: ['cut', 'pick'], limits: [{ scope: 'day', quantity: '750', unit: 'g' }, { scope: 'season', quantity: '1.5', unit: 'kg' }] },
  });
  expect(allowed.status(), await allowed.text()).toBe(200);
  const now = Date.now();
  const granted = await walter.post(`/api/parcels/${parcelId}/permits`, {
    data: { holder: { kind: 'forager', email: 'forager@example.org' }, startsOn: parcelDate(new Date(now - 2 * 86_400_000)), endsOn: parcelDate(new Date(now + 200 * 86_400_000)), note: 'Card test' },
  });
  expect(granted.status(), await granted.text()).toBe(201);
  const body = (await granted.json()) as { permit: { id: string; state: string } };
  expect(body.permit.state).toBe('active');
  permitId = body.permit.id;
});

test.afterAll(async () => walter?.dispose());

/** Looks at the verify page's verdict: signed or not, and the status box's state. */
async function expectVerdict(page: Page, state: string) {
  await expect(page.getByTestId('signature')).toHaveAttribute('data-signed', 'true');
  await expect(page.getByTestId('signature')).toContainText('Signed by Tallywood');
  await expect(page.getByTestId('status')).toHaveAttribute('data-state', state);
}

test('given an active permit, its card opened by the holder verifies on the warden page as signed and active; revoked, as revoked since today; with no network, still as signed, with its status unknown', async ({ browser }) => {
  const context = await browser.newContext({ storageState: sessionFile('forager@example.org') });
  const page = await context.newPage();
  await page.goto('/my-permits');
  await page.locator(`[data-permit="${permitId}"]`).getByTestId('card-link').click();
  await expect(page).toHaveURL(new RegExp(`/permits/${permitId}/card$`));
  await expect(page.getByTestId('card-holder')).toContainText('Owen');
  await expect(page.getByTestId('permit-card')).toContainText(name);
  // Limits in words, as written to the landowner (numeric(18,6) holds 1.500000).
  await expect(page.getByTestId('card-limits')).toHaveText('Limits: 750 g a day; 1.5 kg a season');
  const token = (await page.getByTestId('card-qr').getAttribute('data-token')) ?? '';
  expect(token).toMatch(/^[\w-]+\.[\w-]+\.[\w-]+$/);
  await page.evaluate(() => navigator.serviceWorker.ready);

  await page.goto(`/verify#${token}`);
  await expect.poll(() => page.evaluate(() => Boolean(navigator.serviceWorker.controller))).toBe(true);
  // With the service worker in control, the card is opened once more, so the phone keeps it for no signal.
  await page.goto(`/permits/${permitId}/card`);
  await expect(page.getByTestId('card-qr')).toBeVisible();
  await page.goto(`/verify#${token}`);
  await page.reload();
  await expectVerdict(page, 'active');
  await expect(page.getByTestId('status')).toContainText('Active');
  await expect(page.getByTestId('statement')).toContainText(name);
  await expect(page.getByTestId('statement')).toContainText('Oyster mushroom: 750 g a day, 1.5 kg a season');

  // The parcel's day before and after the revocation: the same, unless its midnight falls in between (the suite also runs at 23:45 on the parcels).
  const dayBefore = parcelDay(new Date());
  const revoked = await walter.post(`/api/permits/${permitId}/revoke`, { data: { reason: 'Card test: the permit is withdrawn.' } });
  expect(revoked.status(), await revoked.text()).toBe(200);
  const dayAfter = parcelDay(new Date());
  await page.reload();
  await expectVerdict(page, 'revoked');
  await expect(page.getByTestId('status')).toContainText(new RegExp(`Revoked since (${dayBefore}|${dayAfter})`));

  await context.setOffline(true);
  await page.reload();
  await expectVerdict(page, 'unknown');
  await expect(page.getByTestId('status')).toContainText('Could not check the current status');
  // A new tab with the link alone, offline too.
  const again = await context.newPage();
  await again.goto(`/verify#${token}`);
  await expectVerdict(again, 'unknown');
  // The forager's card opens with no signal too, with a code that still verifies as signed.
  await again.goto(`/permits/${permitId}/card`);
  const kept = (await again.getByTestId('card-qr').getAttribute('data-token')) ?? '';
  await again.goto(`/verify#${kept}`);
  await expectVerdict(again, 'unknown');
  await context.close();
});

test('given a forged code (a statement with a signature Tallywood did not make), the warden page says it was not signed by Tallywood, and the status endpoint refuses it', async ({ page, request }) => {
  const context = await page.context().browser()!.newContext({ storageState: sessionFile('landowner@example.org') });
  const owner = await context.newPage();
  await owner.goto(`/permits/${permitId}/card`);
  // Revoked by the test before: the landowner still opens it, and no code is made for it.
  await expect(owner.getByTestId('no-card')).toContainText('This permit is revoked');
  await context.close();

  const keys = (await (await request.get('/.well-known/permit-keys.json')).json()) as { keys: { kty: string; crv: string; kid: string; x: string; d?: string }[] };
  expect(keys.keys[0]).toMatchObject({ kty: 'OKP', crv: 'Ed25519', alg: 'EdDSA' });
  expect(keys.keys[0]?.d).toBeUndefined();

  const header = Buffer.from(JSON.stringify({ alg: 'EdDSA', kid: keys.keys[0]?.kid, typ: 'permit' })).toString('base64url');
  const payload = Buffer.from(JSON.stringify({ permit: permitId, holder: 'Someone', parcel: name, tz: 'America/New_York', from: '2026-01-01', to: '2099-01-01', species: [], iat: 1 })).toString('base64url');
  const forged = `${header}.${payload}.${Buffer.alloc(64, 7).toString('base64url')}`;
  await page.goto(`/verify#${forged}`);
  await expect(page.getByTestId('signature')).toHaveAttribute('data-signed', 'false');
  await expect(page.getByTestId('signature')).toContainText('Not signed by Tallywood');
  const refused = await request.get(`/api/permits/status?token=${encodeURIComponent(forged)}`);
  expect(refused.status()).toBe(400);
  expect((await refused.json()).error.code).toBe('not-signed');
  expect((await request.get('/api/permits/status')).status()).toBe(400);
});

test('given someone who is neither the holder nor the landowner, the card page does not exist for them', async ({ browser }) => {
  const context = await browser.newContext({ storageState: sessionFile('beth.lindqvist@example.org') });
  const page = await context.newPage();
  expect((await page.goto(`/permits/${permitId}/card`))?.status()).toBe(404);
  await context.close();
  const signedOut = await browser.newContext();
  const anonymous = await signedOut.newPage();
  await anonymous.goto(`/permits/${permitId}/card`);
  await expect(anonymous).toHaveURL(/\/sign-in\?next=/);
  await signedOut.close();
});

test('given an active permit, its card reads at 1280 and 390 px and in print, with nothing wider than the window', async ({ browser }) => {
  // A permit of its own: the one above was revoked.
  const parcels = (await (await walter.get('/api/parcels')).json()) as { parcels: { id: string; name: string }[] };
  const parcelId = parcels.parcels.find((p) => p.name === name)?.id;
  const now = Date.now();
  const granted = await walter.post(`/api/parcels/${parcelId}/permits`, {
    data: { holder: { kind: 'forager', email: 'forager@example.org' }, startsOn: parcelDate(new Date(now - 86_400_000)), endsOn: parcelDate(new Date(now + 100 * 86_400_000)), note: 'Card test, again' },
  });
  expect(granted.status(), await granted.text()).toBe(201);
  const id = ((await granted.json()) as { permit: { id: string } }).permit.id;
  // The landowner reaches the card from the parcel's permits.
  const owners = await browser.newContext({ storageState: sessionFile('landowner@example.org') });
  const owner = await owners.newPage();
  await owner.goto(`/land/${parcelId}/permits`);
  await owner.locator(`[data-permit="${id}"]`).getByTestId('card-link').click();
  await expect(owner.getByTestId('card-holder')).toContainText('Owen');
  await expect(owner.getByTestId('card-qr')).toHaveAttribute('data-token', /^[\w-]+\.[\w-]+\.[\w-]+$/);
  await owners.close();

  mkdirSync(screens, { recursive: true });
  const context = await browser.newContext({ storageState: sessionFile('forager@example.org') });
  const page = await context.newPage();
  for (const [width, label] of [[1280, 'wide'], [390, 'phone']] as const) {
    await page.setViewportSize({ width, height: 900 });
    await page.goto(`/permits/${id}/card`);
    await expect(page.getByTestId('card-qr')).toBeVisible();
    expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(width);
    await page.screenshot({ path: join(screens, `permit-card-${label}.png`), fullPage: true });
    const token = (await page.getByTestId('card-qr').getAttribute('data-token')) ?? '';
    activeToken = token;
    await page.goto(`/verify#${token}`);
    await expectVerdict(page, 'active');
    expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(width);
    await page.screenshot({ path: join(screens, `verify-${label}.png`), fullPage: true });
  }
  await page.setViewportSize({ width: 800, height: 1100 });
  await page.goto(`/permits/${id}/card`);
  await page.emulateMedia({ media: 'print' });
  await expect(page.locator('body > header')).toBeHidden();
  await expect(page.getByRole('button', { name: 'Print this card' })).toBeHidden();
  await expect(page.getByTestId('card-qr')).toBeVisible();
  await page.screenshot({ path: join(screens, 'permit-card-print.png'), fullPage: true });
  await page.emulateMedia({ media: 'screen' });

  // The demo's own active permits (parcels of five to seven species): each code fits a QR code of version 22 or below.
  await page.goto('/my-permits');
  const cards = await page.getByTestId('card-link').evaluateAll((links) => links.map((a) => (a as HTMLAnchorElement).href));
  expect(cards.length).toBeGreaterThan(1);
  for (const card of cards) {
    await page.goto(card);
    const qr = page.getByTestId('card-qr');
    const version = Number(await qr.getAttribute('data-qr-version'));
    const token = (await qr.getAttribute('data-token')) ?? '';
    console.log(`${await page.locator('h1').textContent()}: code of ${token.length} characters, QR version ${version}`);
    expect(version).toBeLessThanOrEqual(22);
  }
  await context.close();
});

test("given a warden's phone that has opened any Tallywood page once, signed out, the check page opens with no signal and verifies a card", async ({ browser }) => {
  expect(activeToken).not.toBe('');
  const context = await browser.newContext();
  const page = await context.newPage();
  await page.goto('/');
  // The worker keeps the check page when it installs (src/sw.ts); the page itself was never opened.
  await page.evaluate(() => navigator.serviceWorker.ready);
  await expect.poll(() => page.evaluate(async () => Boolean(await (await caches.open('tallywood-pages')).match('/verify')))).toBe(true);
  await context.setOffline(true);
  await page.goto(`/verify#${activeToken}`);
  await expectVerdict(page, 'unknown');
  await expect(page.getByTestId('statement')).toContainText(name);
  await context.close();
});
