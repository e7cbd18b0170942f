import { expect, test, type APIRequestContext, type Browser, type BrowserContext, type Page } from '@playwright/test';
import { apiAs, mailFor, sessionFile } from './support';

/**
 * The Field with no signal, in Chromium with the app's service worker: the pack is fetched online,
 * then the network is cut (Playwright's offline emulation, which the service worker sees too) and
 * the page is reloaded from the worker's cache. The parcel has a cut-out and a no-harvest zone, and
 * is made through the API so the test does not depend on the demo's dates.
 */
const west = -72.97;
const south = 43.9;
const size = 0.004; // about 320 m east–west and 445 m north–south at 43.9°N
const name = `Offline test lot ${Date.now()}`;
const centre = { longitude: west + 0.001, latitude: south + size / 2 };
// The cut-out: a square hole near the east side, about 80 m across.
const hole = { west: west + 0.0025, south: south + 0.0015, size: 0.001 };
const inHole = { longitude: hole.west + hole.size / 2, latitude: hole.south + hole.size / 2 };
// The zone: a square in the south-west corner.
const zone = { west: west + 0.0002, south: south + 0.0002, size: 0.0006 };
const inZone = { longitude: zone.west + zone.size / 2, latitude: zone.south + zone.size / 2 };

let walter: APIRequestContext;

/** The parcel's calendar date at an instant (YYYY-MM-DD), from the IANA tz data: never the UTC date. */
const parcelDate = (date: Date) => new Intl.DateTimeFormat('en-CA', { timeZone: 'America/New_York', year: 'numeric', month: '2-digit', day: '2-digit' }).format(date);
const square = (w: number, s: number, d: number) => [[w, s], [w + d, s], [w + d, s + d], [w, s + d], [w, s]];

test.beforeAll(async () => {
  walter = await apiAs('landowner@example.org');
  const ring = square(west, south, size);
  const holeRing = square(hole.west, hole.south, hole.size).reverse();
  const created = await walter.post('/api/parcels', { data: { name, timeZone: 'America/New_York', nearingThresholdPercent: 80, openToRequests: false, description: '', boundary: { type: 'Polygon', coordinates: [ring, holeRing] } } });
  expect(created.status(), await created.text()).toBe(201);
  const parcelId = (await created.json()).parcel.id as string;
  const { species } = (await (await walter.get('/api/species')).json()) as { species: { id: string; commonName: string }[] };
  const oyster = species.find((s) => s.commonName === 'Oyster mushroom');
  const allowed = await walter.put(`/api/parcels/${parcelId}/allowances`, {
    data: { speciesId: oyster?.id, seasons: [{ start: '01-01', end: '12-31' }], methods: ['cut', 'pick'], limits: [{ scope: 'visit', quantity: '2', unit: 'kg' }, { scope: 'day', quantity: '1000', unit: 'g' }, { scope: 'parcel-season', quantity: '1100', unit: 'g' }] },
  });
  expect(allowed.status(), await allowed.text()).toBe(200);
  expect((await walter.post(`/api/parcels/${parcelId}/zones`, { data: { name: 'Fern hollow', reason: 'Nesting woodcock', boundary: { type: 'Polygon', coordinates: [square(zone.west, zone.south, zone.size)] } } })).status()).toBe(201);
  const now = new Date();
  for (const email of ['forager@example.org', 'beth.lindqvist@example.org']) {
    const granted = await walter.post(`/api/parcels/${parcelId}/permits`, {
      data: { holder: { kind: 'forager', email }, startsOn: parcelDate(new Date(now.getTime() - 2 * 86_400_000)), endsOn: parcelDate(new Date(now.getTime() + 200 * 86_400_000)), note: 'Offline field test' },
    });
    expect(granted.status(), await granted.text()).toBe(201);
  }
});

test.afterAll(async () => walter?.dispose());

/** Opens the Field online until the pack is on the phone and the service worker controls the page (so the page itself is kept). */
async function readyForTheField(context: BrowserContext): Promise<Page> {
  const page = await context.newPage();
  await page.goto('/field');
  await expect(page.getByTestId('pack-status')).toHaveAttribute('data-pack', 'ready', { timeout: 20_000 });
  await expect(page.getByTestId('pack-age')).toContainText('Field pack on this phone');
  await page.evaluate(() => navigator.serviceWorker.ready);
  await page.reload();
  await expect.poll(() => page.evaluate(() => Boolean(navigator.serviceWorker.controller))).toBe(true);
  await expect(page.getByTestId('pack-status')).toHaveAttribute('data-pack', 'ready');
  return page;
}

async function checkInAt(page: Page, context: BrowserContext, at: { longitude: number; latitude: number }, accuracy: number) {
  await context.setGeolocation({ ...at, accuracy });
  await page.getByRole('button', { name: 'Use my location' }).click();
  const verdict = page.getByTestId('verdict');
  await expect(verdict).toHaveAttribute('data-offline', 'true');
  return verdict;
}

/** Keeps one entry of oyster mushrooms in grams on the phone, from an offline clear check-in. */
async function keep(page: Page, amount: string) {
  const form = page.getByTestId('harvest-form');
  await form.getByLabel('Species').selectOption({ label: 'Oyster mushroom' });
  await form.getByLabel('Unit').selectOption('g');
  await form.getByLabel('Quantity').fill(amount);
  await expect(form.getByTestId('projection')).toBeVisible();
  await form.getByRole('button', { name: 'Keep entry on this phone' }).click();
  await expect(page.getByTestId('field-notice')).toContainText(`Kept on this phone: Oyster mushroom, ${amount} g`);
}

/** The Field made ready online, then the network cut and the page reloaded from the service worker. */
async function offlineField(browser: Browser): Promise<{ context: BrowserContext; page: Page }> {
  const context = await browser.newContext({ storageState: sessionFile('forager@example.org'), geolocation: { ...centre, accuracy: 8 }, permissions: ['geolocation', 'background-sync'] });
  const page = await readyForTheField(context);
  await context.setOffline(true);
  await page.reload();
  await page.locator('[data-hydrated]').waitFor();
  return { context, page };
}

test('given the field pack on the phone and no network, a reload still opens the Field and every verdict is decided on the phone, marked offline', async ({ browser }) => {
  const { context, page } = await offlineField(browser);

  const verdict = await checkInAt(page, context, centre, 8);
  await expect(verdict).toHaveAttribute('data-verdict', 'clear');
  await expect(verdict).toContainText(name);
  await expect(page.getByTestId('offline-mark')).toContainText('Offline, as of');

  // 0.00003° of longitude is about 2.4 m at 43.9°N: inside, but well within a 20 m fix of the west edge.
  await expect(await checkInAt(page, context, { longitude: west + 0.00003, latitude: centre.latitude }, 20)).toHaveAttribute('data-verdict', 'edge');
  const inZoneVerdict = await checkInAt(page, context, inZone, 5);
  await expect(inZoneVerdict).toHaveAttribute('data-verdict', 'closed');
  await expect(inZoneVerdict).toContainText('Fern hollow');
  const cutOut = await checkInAt(page, context, inHole, 5);
  await expect(cutOut).toHaveAttribute('data-verdict', 'outside');
  await expect(cutOut).toContainText(`You are in a part of ${name} that is not included`);
  await context.close();
});

test('given three entries kept offline, closing the page loses none, and the tallies on the phone count them', async ({ browser }) => {
  const { context, page } = await offlineField(browser);
  await expect(await checkInAt(page, context, centre, 8)).toHaveAttribute('data-verdict', 'clear');

  for (const amount of ['100', '150', '200']) await keep(page, amount);
  await expect(page.getByTestId('queue').locator('[data-state="waiting"]')).toHaveCount(3);
  // 100 + 150 + 200 = 450 g of the day's 1000 g.
  await expect(page.getByTestId('species').locator('[data-species="Oyster mushroom"] [data-scope="day"]')).toContainText('550 g left of 1,000 g');
  await page.close();

  const again = await context.newPage();
  await again.goto('/field');
  await again.locator('[data-hydrated]').waitFor();
  await expect(again.getByTestId('queue').locator('[data-state="waiting"]')).toHaveCount(3);
  await expect(await checkInAt(again, context, centre, 8)).toHaveAttribute('data-verdict', 'clear');
  await expect(again.getByTestId('species').locator('[data-species="Oyster mushroom"] [data-scope="day"]')).toContainText('550 g left of 1,000 g');
  await context.close();
});

type LedgerLine = { parcelName: string; quantities: { quantity: string; unit: string }[] };
const ledgerOf = async (request: APIRequestContext) => ((await (await request.get('/api/ledger')).json()) as { entries: LedgerLine[] }).entries.filter((e) => e.parcelName === name);
const grams = (lines: LedgerLine[]) => lines.map((l) => l.quantities.map((q) => `${q.quantity} ${q.unit}`).join('+')).sort();

test('given entries kept offline, the connection coming back sends them once, and a retry after an answer lost on the way records nothing twice', async ({ browser }) => {
  const context = await browser.newContext({ storageState: sessionFile('forager@example.org'), geolocation: { ...centre, accuracy: 8 }, permissions: ['geolocation', 'background-sync'] });
  const page = await readyForTheField(context);
  const before = grams(await ledgerOf(page.request));
  await context.setOffline(true);
  await page.reload();
  await page.locator('[data-hydrated]').waitFor();
  await expect(await checkInAt(page, context, centre, 8)).toHaveAttribute('data-verdict', 'clear');
  await keep(page, '31');
  await keep(page, '37');
  await expect(page.getByTestId('queue').locator('[data-state="waiting"]')).toHaveCount(2);

  // The server records the batch, but its answer never reaches the phone (neither the page nor its
  // service worker, whose background sync also sends when the connection returns): the records stay waiting.
  let committed = 0;
  await context.route('**/api/field/sync', async (route) => {
    const response = await route.fetch();
    if (response.ok()) committed += 1;
    await route.abort('connectionreset');
  });
  await context.setOffline(false);
  await expect.poll(() => committed).toBeGreaterThan(0);
  await expect(page.getByTestId('queue').locator('[data-state="waiting"]')).toHaveCount(2);
  expect(grams(await ledgerOf(page.request))).toEqual([...before, '31 g', '37 g'].sort());

  // Sent again: the server answers for what it already holds, and the ledger has each entry once.
  await context.unroute('**/api/field/sync');
  await page.getByRole('button', { name: /Send now/ }).click();
  await expect(page.getByTestId('queue').locator('[data-state="sent"]')).toHaveCount(2);
  expect(grams(await ledgerOf(page.request))).toEqual([...before, '31 g', '37 g'].sort());

  await page.goto('/ledger');
  const rows = page.locator('[data-testid="ledger-table"][data-hydrated="true"] tbody tr').filter({ hasText: name });
  await expect(rows.filter({ hasText: '31 g' })).toHaveCount(1);
  await expect(rows.filter({ hasText: '37 g' })).toHaveCount(1);
  await context.close();
});

test('given an entry kept offline and the Field closed, the browser sends it by itself when the connection returns (background sync)', async ({ browser }) => {
  const { context, page } = await offlineField(browser);
  await expect(await checkInAt(page, context, centre, 8)).toHaveAttribute('data-verdict', 'clear');
  await keep(page, '43');
  await expect(page.getByTestId('queue').locator('[data-state="waiting"]')).toHaveCount(1);
  await page.close();

  // No page is open, so only the service worker's sync can send it (the API is read from outside the browser).
  await context.setOffline(false);
  await expect.poll(async () => grams(await ledgerOf(context.request)).filter((g) => g === '43 g').length, { timeout: 30_000 }).toBe(1);

  // Opened again, the Field shows it as sent, and sending once more records nothing twice.
  const again = await context.newPage();
  await again.goto('/field');
  await expect(again.getByTestId('queue').locator('[data-state="sent"]').filter({ hasText: '43 g' })).toHaveCount(1);
  expect(grams(await ledgerOf(context.request)).filter((g) => g === '43 g')).toHaveLength(1);
  await context.close();
});

/*
 * Everyone on the parcel may take 1 100 g this season. Owen keeps 450 g on his phone, within its
 * tallies (the pack counted at most the 111 g the tests above sent); meanwhile Beth records 700 g
 * online. Synced, Owen's entry takes the season over: recorded, flagged over on sync, and the
 * landowner is told.
 */
test("given an entry within on the phone that is over once another forager's entry is counted, it is recorded, flagged over on sync, and the landowner hears of it", async ({ browser }) => {
  const { context, page } = await offlineField(browser);
  await expect(await checkInAt(page, context, centre, 8)).toHaveAttribute('data-verdict', 'clear');
  await keep(page, '450');
  await expect(page.getByTestId('species').locator('[data-species="Oyster mushroom"] [data-scope="parcel-season"]')).toHaveAttribute('data-state', /within|nearing|reached/);

  const beth = await apiAs('beth.lindqvist@example.org');
  const visit = await beth.post('/api/check-ins', { data: { longitude: centre.longitude, latitude: centre.latitude, accuracyM: 5 } });
  expect(visit.status(), await visit.text()).toBe(200);
  const { species } = (await (await beth.get('/api/species')).json()) as { species: { id: string; commonName: string }[] };
  const took = await beth.post('/api/harvest-entries', {
    data: { idempotencyKey: `offline-spec-${Date.now()}`, visitId: (await visit.json()).visitId, speciesId: species.find((s) => s.commonName === 'Oyster mushroom')?.id, method: 'pick', quantities: [{ quantity: '700', unit: 'g' }] },
  });
  expect(took.status(), await took.text()).toBe(201);
  await beth.dispose();

  await context.setOffline(false);
  const flagged = page.getByTestId('queue').locator('[data-state="flagged"]');
  await expect(flagged).toHaveCount(1);
  await expect(flagged).toContainText('Over on sync');
  await expect.poll(async () => (await mailFor(page.request, 'landowner@example.org')).some((m) => m.subject === `Limit went over on sync on ${name}`)).toBe(true);
  await context.close();
});
