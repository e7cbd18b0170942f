import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { expect, test, type APIRequestContext, type Page } from '@playwright/test';
import { apiAs, mailFor, pageAs } from './support';

/*
 * The landowner's parcel pages, in Chromium: fees typed in dollars, allowances changed in place with
 * their history, removals that ask first, a parcel that cannot be opened to requests before it has an
 * allowance and terms, and every land page no wider than the window on a phone and a laptop.
 *
 * Each test draws its own parcel clear of the demo valley and the other specs' parcels
 * (−72.89…−72.86, 43.78…43.79).
 */
let walter: APIRequestContext;
let chagaId = '';
const stamp = Date.now();

test.beforeAll(async () => {
  walter = await apiAs('landowner@example.org');
  const { species } = (await (await walter.get('/api/species')).json()) as { species: { id: string; commonName: string }[] };
  chagaId = species.find((s) => s.commonName === 'Chaga')?.id ?? '';
  expect(chagaId).not.toBe('');
});

test.afterAll(async () => walter?.dispose());

/** A new parcel of Walter's, a square 0.002° a side, `slot` squares east of the first. */
async function newParcel(name: string, slot: number) {
  const west = -72.89 + slot * 0.004;
  const south = 43.78;
  const ring = [[west, south], [west + 0.002, south], [west + 0.002, south + 0.002], [west, south + 0.002], [west, south]];
  const created = await walter.post('/api/parcels', { data: { name: `${name} ${stamp}`, timeZone: 'America/New_York', nearingThresholdPercent: 80, openToRequests: false, description: '', boundary: { type: 'Polygon', coordinates: [ring] } } });
  expect(created.status(), await created.text()).toBe(201);
  return { id: (await created.json()).parcel.id as string, west, south };
}

const chaga = (quantity: string) => ({ speciesId: chagaId, seasons: [{ start: '11-01', end: '03-15' }], methods: ['strip'], limits: [{ scope: 'visit', quantity, unit: 'g' }] });

test('given a fee typed in dollars, "12.505" and "abc" get a sentence beside the fee field and "12.50" is saved and shown as $12.50', async ({ browser }) => {
  const { id } = await newParcel('Fee lot', 0);
  const page = await pageAs(browser, 'landowner@example.org');
  await page.goto(`/land/${id}/permits`);
  const grant = page.getByTestId('grant');
  await grant.getByLabel(/Forager's e-mail/).fill('hattie.brule@example.org');
  const fee = grant.getByLabel('Fee in dollars');

  await fee.fill('12.505');
  await grant.getByRole('button', { name: 'Grant permit' }).click();
  await expect(fee).toHaveAttribute('aria-invalid', 'true');
  const beside = page.locator(`#${await fee.getAttribute('aria-describedby')}`);
  await expect(beside).toHaveText('Give at most 2 digits after the decimal point (whole cents), like 12.50.');

  await fee.fill('abc');
  await grant.getByRole('button', { name: 'Grant permit' }).click();
  await expect(page.locator(`#${await fee.getAttribute('aria-describedby')}`)).toHaveText('Enter the fee in dollars, like 12.50 (or 0 for no fee).');

  await fee.fill('12.50');
  await grant.getByRole('button', { name: 'Grant permit' }).click();
  const permit = page.getByTestId('permits').locator('li').filter({ hasText: 'Hattie Brule' });
  await expect(permit).toContainText('$12.50 unpaid');
  await page.context().close();
});

test('given an allowance, a limit is changed in place and shown with its history; adding the species again opens it instead of replacing it', async ({ browser }) => {
  const { id } = await newParcel('Allowance lot', 1);
  const added = await walter.post(`/api/parcels/${id}/allowances`, { data: chaga('250') });
  expect(added.status(), await added.text()).toBe(201);
  const allowanceId = (await added.json()).allowance.id as string;
  const page = await pageAs(browser, 'landowner@example.org');
  await page.goto(`/land/${id}/rules`);
  const card = page.getByTestId('allowances').locator('[data-allowance="Chaga"]');
  await expect(card.getByTestId('allowance-limits')).toHaveText('250 g a visit');

  await card.getByText('Change Chaga').click();
  const edit = page.getByTestId(`allowance-edit-${allowanceId}`);
  await expect(edit.getByLabel('Species')).toBeDisabled();
  await expect(edit.getByLabel('Limit 1 quantity')).toHaveValue('250');
  await edit.getByLabel('Limit 1 quantity').fill('500');
  await edit.getByRole('button', { name: 'Save changes' }).click();
  await expect(card.getByTestId('allowance-limits')).toHaveText('500 g a visit');
  await expect(page.getByTestId('parcel-history').first()).toContainText('Changed the allowance for Chaga: limit 250 g a visit → 500 g a visit.');
  // The summary page's history has it too.
  await page.getByTestId('parcel-nav').getByRole('link', { name: 'Summary' }).click();
  await expect(page.getByTestId('parcel-history')).toContainText('limit 250 g a visit → 500 g a visit');

  // Two limits of one scope: the whole-list error shows, and goes as soon as it is fixed.
  await page.goto(`/land/${id}/rules`);
  await page.getByText('Allow a species').click();
  const form = page.getByTestId('allowance-form');
  await form.getByLabel('Species').selectOption({ label: 'Black trumpet' });
  await form.getByLabel('Season 1 start').fill('07-01');
  await form.getByLabel('Season 1 end').fill('09-30');
  await form.getByLabel('pick', { exact: true }).check();
  await form.getByLabel('Limit 1 quantity').fill('200');
  await form.getByLabel('Limit 1 unit').selectOption('g');
  await form.getByRole('button', { name: 'Add a limit' }).click();
  await form.getByLabel('Limit 2 quantity').fill('300');
  await form.getByLabel('Limit 2 scope').selectOption('visit');
  await form.getByRole('button', { name: 'Save allowance' }).click();
  const listError = form.getByText(/Give each limit once/);
  await expect(listError).toBeVisible();
  await form.getByLabel('Limit 2 scope').selectOption('day');
  await expect(listError).toHaveCount(0);

  // Choosing Chaga, which has an allowance, opens it here with its terms.
  await form.getByLabel('Species').selectOption({ label: 'Chaga (has an allowance)' });
  await expect(form.getByTestId('allowance-exists')).toContainText('Chaga already has an allowance on this parcel');
  await expect(form.getByLabel('Limit 1 quantity')).toHaveValue('500');
  await expect(form.getByLabel('Season 1 start')).toHaveValue('11-01');
  await form.getByLabel('Limit 1 quantity').fill('750');
  await form.getByRole('button', { name: 'Save changes' }).click();
  await expect(card.getByTestId('allowance-limits')).toHaveText('750 g a visit');
  await expect(page.getByTestId('allowances').locator('[data-allowance="Chaga"]')).toHaveCount(1);
  await expect(page.getByTestId('parcel-history').first()).toContainText('limit 500 g a visit → 750 g a visit');
  await page.context().close();
});

/** Clicks Remove in `item`, declines the question, then accepts it; the item stays, then goes. */
async function removeWithConfirmation(page: Page, list: string, text: string, question: RegExp) {
  const item = page.getByTestId(list).locator('li').filter({ hasText: text });
  // The Remove buttons ask only once their islands are hydrated (Astro drops `ssr` from each then).
  await expect(page.locator('astro-island[ssr]')).toHaveCount(0);
  let asked = '';
  page.once('dialog', (dialog) => {
    asked = dialog.message();
    void dialog.dismiss();
  });
  await item.getByRole('button', { name: 'Remove' }).click();
  await expect.poll(() => asked).toMatch(question);
  await expect(item).toHaveCount(1);
  page.once('dialog', (dialog) => void dialog.accept());
  await item.getByRole('button', { name: 'Remove' }).click();
  await expect(item).toHaveCount(0);
}

test('given a closure, a hazard and a no-harvest zone, removing each asks first, and declining keeps it', async ({ browser }) => {
  const { id, west, south } = await newParcel('Removals lot', 2);
  expect((await walter.post(`/api/parcels/${id}/closures`, { data: { startsOn: '2031-11-01', endsOn: '2031-11-30', reason: 'Rifle deer season' } })).status()).toBeLessThan(300);
  expect((await walter.post(`/api/parcels/${id}/hazards`, { data: { kind: 'terrain', title: 'Ledge above the brook', detail: '' } })).status()).toBeLessThan(300);
  const zone = [[west + 0.0005, south + 0.0005], [west + 0.001, south + 0.0005], [west + 0.001, south + 0.001], [west + 0.0005, south + 0.001], [west + 0.0005, south + 0.0005]];
  const zoned = await walter.post(`/api/parcels/${id}/zones`, { data: { name: 'Orchid seep', reason: 'Rare orchids', boundary: { type: 'Polygon', coordinates: [zone] } } });
  expect(zoned.status(), await zoned.text()).toBeLessThan(300);

  const page = await pageAs(browser, 'landowner@example.org');
  await page.goto(`/land/${id}/closures`);
  await removeWithConfirmation(page, 'closures', 'Rifle deer season', /^Remove the closure Nov 1, 2031 – Nov 30, 2031 \(Rifle deer season\)\?/);
  await removeWithConfirmation(page, 'hazards', 'Ledge above the brook', /^Remove the hazard "Ledge above the brook"\?/);
  await removeWithConfirmation(page, 'zones', 'Orchid seep', /^Remove the no-harvest zone "Orchid seep"\?/);
  await page.goto(`/land/${id}`);
  await expect(page.getByTestId('parcel-history')).toContainText('Removed the no-harvest zone Orchid seep.');
  await page.context().close();
});

test('given a new parcel with no allowance and no terms, its pages say what is missing and opening it to requests is refused beside the box', async ({ browser }) => {
  const { id } = await newParcel('Not ready lot', 3);
  const page = await pageAs(browser, 'landowner@example.org');
  await page.goto(`/land/${id}`);
  await expect(page.getByTestId('readiness')).toContainText('Not yet');
  await expect(page.getByTestId('listing-needs')).toContainText('an allowance');
  await expect(page.getByTestId('listing-needs')).toContainText('terms');

  await page.goto(`/land/${id}/settings`);
  await expect(page.getByTestId('listing-needs')).toBeVisible();
  const settings = page.getByTestId('settings');
  const open = settings.getByLabel('Foragers may find the parcel and ask for access');
  await expect(settings).toContainText('Not possible yet: the parcel needs an allowance');
  await open.check();
  await settings.getByRole('button', { name: 'Save settings' }).click();
  // The box is described by its error once the answer arrives (until then, by its help text).
  await expect(open).toHaveAttribute('aria-describedby', /-error$/);
  await expect(page.locator(`#${await open.getAttribute('aria-describedby')}`)).toContainText('Before foragers can ask for access, the parcel needs an allowance');
  expect((await (await walter.get(`/api/parcels/${id}`)).json()).parcel.openToRequests).toBe(false);

  // With an allowance and terms, it opens.
  expect((await walter.post(`/api/parcels/${id}/allowances`, { data: chaga('250') })).status()).toBe(201);
  expect((await walter.post(`/api/parcels/${id}/terms`, { data: { body: 'Strip chaga from standing dead birch only.' } })).status()).toBeLessThan(300);
  await page.reload();
  await expect(page.getByTestId('listing-needs')).toHaveCount(0);
  await settings.getByLabel('Foragers may find the parcel and ask for access').check();
  await settings.getByRole('button', { name: 'Save settings' }).click();
  await expect(page.getByTestId('parcel-facts')).toContainText('open to requests');
  await page.getByTestId('parcel-nav').getByRole('link', { name: 'Summary' }).click();
  await expect(page.getByTestId('readiness')).toContainText('Yes: foragers can find this parcel');
  await expect(page.getByTestId('parcel-history')).toContainText('Opened the parcel to requests.');
  await expect(page.getByTestId('parcel-history')).toContainText('Published version 1 of the terms.');
  await page.context().close();
});

test('given every land page, none is wider than the window at 390 px or at 1280 px', async ({ browser }) => {
  const { parcels } = (await (await walter.get('/api/parcels')).json()) as { parcels: { id: string; name: string }[] };
  const cobble = parcels.find((p) => p.name === 'Cobble Ridge Lot');
  expect(cobble).toBeTruthy();
  const sections = ['', '/rules', '/closures', '/terms', '/permits', '/tallies', '/settings'];
  const paths = ['/land', '/land/new', ...sections.map((s) => `/land/${cobble?.id}${s}`)];
  const shots = process.env.TALLYWOOD_SCREENSHOTS_DIR;
  if (shots) mkdirSync(shots, { recursive: true });
  const page = await pageAs(browser, 'landowner@example.org');
  for (const width of [390, 1280]) {
    await page.setViewportSize({ width, height: 900 });
    for (const path of paths) {
      await page.goto(path);
      await page.waitForLoadState('networkidle');
      // Every folded part open (forms, histories, the boundary editor), so they are measured too.
      await page.evaluate(() => document.querySelectorAll<HTMLDetailsElement>('details:not([data-testid="menu"])').forEach((d) => { d.open = true; }));
      const { scrollWidth, innerWidth } = await page.evaluate(() => ({ scrollWidth: document.documentElement.scrollWidth, innerWidth: window.innerWidth }));
      expect(scrollWidth, `${path} at ${width} px`).toBeLessThanOrEqual(innerWidth);
      if (path === '/land') {
        // The list's Today column is whole: no cell is cut off by the table or the window.
        const clipped = await page.getByTestId('parcel-today').evaluateAll((cells) =>
          cells.filter((cell) => cell.scrollWidth > cell.clientWidth + 1 || cell.getBoundingClientRect().right > (cell.closest('.card')?.getBoundingClientRect().right ?? 0) + 1).length);
        expect(clipped, `Today cells cut off at ${width} px`).toBe(0);
        const table = await page.getByTestId('parcel-list').evaluate((t) => ({ table: t.scrollWidth, box: t.parentElement?.clientWidth ?? 0 }));
        expect(table.table, `the parcel list at ${width} px`).toBeLessThanOrEqual(table.box);
      }
      if (shots) await page.screenshot({ path: join(shots, `${width}${path.replace(/\/[0-9a-f-]{36}/, '/cobble').replace(/\//g, '_')}.png`), fullPage: true });
    }
  }
  await page.context().close();
});

test('given an access request, declining it carries the landowner\'s message to the requester in the decline mail', async ({ browser }) => {
  const { id } = await newParcel('Decline lot', 4);
  expect((await walter.post(`/api/parcels/${id}/allowances`, { data: chaga('250') })).status()).toBe(201);
  expect((await walter.post(`/api/parcels/${id}/terms`, { data: { body: 'Strip chaga from standing dead birch only.' } })).status()).toBeLessThan(300);
  expect((await walter.patch(`/api/parcels/${id}`, { data: { openToRequests: true } })).status()).toBe(200);
  const beth = await apiAs('beth.lindqvist@example.org');
  const asked = await beth.post('/api/access-requests', { data: { parcelId: id, startsOn: '2031-11-01', endsOn: '2031-11-30', note: 'A little chaga for tea.' } });
  expect(asked.status(), await asked.text()).toBe(201);
  const permitId = (await asked.json()).permit.id as string;

  const page = await pageAs(browser, 'landowner@example.org');
  await page.goto(`/requests/${permitId}`);
  const decision = page.getByTestId('decision');
  await decision.getByLabel('Decision').selectOption('decline');
  await expect(decision.getByLabel('Fee in dollars')).toHaveCount(0);
  await decision.getByLabel('Message to the requester').fill('The birches are resting this year; ask again next autumn.');
  await decision.getByRole('button', { name: 'Send decision' }).click();
  await expect(page).toHaveURL(new RegExp(`/land/${id}/permits$`));
  await expect(page.getByTestId('permits').locator('[data-state="declined"]')).toBeVisible();
  await expect
    .poll(async () => (await mailFor(page.request, 'beth.lindqvist@example.org')).find((m) => m.subject.includes('was declined') && m.subject.includes('Decline lot'))?.text ?? '')
    .toContain('The birches are resting this year; ask again next autumn.');
  await beth.dispose();
  await page.context().close();
});
