import { expect, test, type APIRequestContext } from '@playwright/test';
import { apiAs, mailFor, sessionFile } from './support';

/**
 * The Field screen in Chromium with a faked position (the W3C Geolocation API as Playwright sets
 * it). The parcel, its allowances, zone and permit are made through the API first, so the test does
 * not depend on the demo's dates.
 */
const west = -72.99;
const south = 43.9;
const size = 0.004; // about 320 m east–west and 445 m north–south at 43.9°N
const centre = { longitude: west + size / 2, latitude: south + size / 2 };
const name = `Field test lot ${Date.now()}`;

let walter: APIRequestContext;

/** The parcel's calendar date at an instant (YYYY-MM-DD), from the IANA tz data: never the UTC date. */
const parcelDate = (date: Date) => new Intl.DateTimeFormat('en-CA', { timeZone: 'America/New_York', year: 'numeric', month: '2-digit', day: '2-digit' }).format(date);

function monthDay(date: Date) {
  const [, month, day] = parcelDate(date).split('-');
  return `${month}-${String(Math.min(Number(day), 28)).padStart(2, '0')}`;
}

test.beforeAll(async () => {
  walter = await apiAs('landowner@example.org');
  const ring = [[west, south], [west + size, south], [west + size, south + size], [west, south + size], [west, south]];
  const created = await walter.post('/api/parcels', { data: { name, timeZone: 'America/New_York', nearingThresholdPercent: 80, openToRequests: false, description: '', boundary: { type: 'Polygon', coordinates: [ring] } } });
  expect(created.status(), await created.text()).toBe(201);
  const parcelId = (await created.json()).parcel.id as string;
  const { species } = (await (await walter.get('/api/species')).json()) as { species: { id: string; commonName: string }[] };
  const oyster = species.find((s) => s.commonName === 'Oyster mushroom');
  const morel = species.find((s) => s.commonName === 'Yellow morel');
  const now = new Date();
  const later = (days: number) => new Date(now.getTime() + days * 86_400_000);
  const allow = (speciesId: string | undefined, seasons: { start: string; end: string }[]) =>
    walter.put(`/api/parcels/${parcelId}/allowances`, { data: { speciesId, seasons, methods: ['cut', 'pick'], limits: [{ scope: 'visit', quantity: '1', unit: 'kg' }, { scope: 'day', quantity: '1000', unit: 'g' }] } });
  expect((await allow(oyster?.id, [{ start: '01-01', end: '12-31' }])).status()).toBe(200);
  // A window that opens in about 60 days and shuts in about 90: out of season today.
  expect((await allow(morel?.id, [{ start: monthDay(later(60)), end: monthDay(later(90)) }])).status()).toBe(200);
  const zone = [[west + 0.0005, south + 0.0005], [west + 0.0012, south + 0.0005], [west + 0.0012, south + 0.0012], [west + 0.0005, south + 0.0012], [west + 0.0005, south + 0.0005]];
  expect((await walter.post(`/api/parcels/${parcelId}/zones`, { data: { name: 'Orchid seep', reason: 'Showy lady’s slippers', boundary: { type: 'Polygon', coordinates: [zone] } } })).status()).toBe(201);
  const granted = await walter.post(`/api/parcels/${parcelId}/permits`, { data: { holder: { kind: 'forager', email: 'forager@example.org' }, startsOn: parcelDate(later(-2)), endsOn: parcelDate(later(200)), note: `Field test ${parcelDate(now)}` } });
  expect(granted.status(), await granted.text()).toBe(201);
});

test.afterAll(async () => walter?.dispose());

async function fieldAt(browser: import('@playwright/test').Browser, at: { longitude: number; latitude: number }, accuracy: number) {
  const context = await browser.newContext({ storageState: sessionFile('forager@example.org'), geolocation: { ...at, accuracy }, permissions: ['geolocation'] });
  const page = await context.newPage();
  await page.goto('/field');
  await page.locator('[data-hydrated]').first().waitFor();
  return { page, context };
}

test('given positions inside, at the edge, outside and in a no-harvest zone, it gives each verdict in words', async ({ browser }) => {
  const { page, context } = await fieldAt(browser, { longitude: west - 0.05, latitude: south }, 10);
  const verdict = page.getByTestId('verdict');
  await page.getByRole('button', { name: 'Use my location' }).click();
  await expect(verdict).toHaveAttribute('data-verdict', 'outside');

  // 0.00003° of longitude is about 2.4 m at 43.9°N: inside, but well within a 20 m fix of the edge.
  await context.setGeolocation({ longitude: west + 0.00003, latitude: centre.latitude, accuracy: 20 });
  await page.getByRole('button', { name: 'Use my location' }).click();
  await expect(verdict).toHaveAttribute('data-verdict', 'edge');
  await expect(verdict).toContainText(/\d+ m/);

  await context.setGeolocation({ longitude: west + 0.00085, latitude: south + 0.00085, accuracy: 5 });
  await page.getByRole('button', { name: 'Use my location' }).click();
  await expect(verdict).toHaveAttribute('data-verdict', 'closed');
  await expect(verdict).toContainText('Orchid seep');
  await context.close();
});

test('given a clear check-in, it records entries to nearing and then, acknowledged, to a breach that the landowner hears of', async ({ browser }) => {
  const { page, context } = await fieldAt(browser, centre, 8);
  await page.getByRole('button', { name: 'Use my location' }).click();
  await expect(page.getByTestId('verdict')).toHaveAttribute('data-verdict', 'clear');
  await expect(page.getByTestId('species').locator('[data-species="Yellow morel"]')).toHaveAttribute('data-state', 'out-of-season');

  const form = page.getByTestId('harvest-form');
  await form.getByLabel('Species').selectOption({ label: 'Oyster mushroom' });
  await form.getByLabel('Unit').selectOption('g');
  await form.getByLabel('Quantity').fill('850');
  // 850 g of 1 kg is 85 %: past the parcel's 80 % threshold, so nearing (DESIGN.md tally states).
  await expect(form.getByTestId('projection').locator('[data-scope="day"]')).toHaveAttribute('data-state', 'nearing');
  await form.getByRole('button', { name: 'Save entry' }).click();
  await expect(page.getByTestId('species').locator('[data-species="Oyster mushroom"]')).toHaveAttribute('data-state', 'nearing');

  await form.getByLabel('Quantity').fill('200');
  await expect(form.getByTestId('projection').locator('[data-scope="day"]')).toHaveAttribute('data-state', 'over');
  await expect(form.getByRole('button', { name: 'Save entry' })).toBeDisabled();
  await form.getByText('This takes a limit over').click();
  await form.getByRole('button', { name: 'Save entry' }).click();
  await expect(page.getByTestId('species').locator('[data-species="Oyster mushroom"]')).toHaveAttribute('data-state', 'over');

  await expect.poll(async () => (await mailFor(page.request, 'landowner@example.org')).some((m) => m.subject === `Limit breached on ${name}`)).toBe(true);
  await context.close();
});
