import { expect, test, type Page } from '@playwright/test';
import { apiAs, mailFor, pageAs, sessionFile } from './support';

/** A draft parcel of Walter's far from the demo valley's others, for the retired species' allowance. */
const west = -72.6;
const south = 44.2;
const size = 0.002;

const cards = (page: Page) => page.getByTestId('species-card');

async function pageWidth(page: Page) {
  return page.evaluate(() => ({ scroll: document.documentElement.scrollWidth, window: window.innerWidth }));
}

test('given a search by scientific name and a kind filter, the list narrows without a reload, and the address keeps the search', async ({ browser }) => {
  const page = await pageAs(browser, 'forager@example.org');
  await page.goto('/catalogue');
  await page.locator('[data-hydrated="true"]').first().waitFor();
  await expect(page.getByTestId('catalogue-count')).toHaveText(/^All \d+ species$/);
  const marker = await page.evaluate(() => ((window as unknown as { notReloaded: boolean }).notReloaded = true));
  expect(marker).toBe(true);

  await page.getByLabel('Search by name').fill('pleurotus');
  await expect(cards(page)).toHaveCount(1);
  await expect(cards(page).getByRole('heading')).toHaveText('Oyster mushroom');
  await expect(page).toHaveURL(/\?q=pleurotus$/);

  await page.getByLabel('Search by name').fill('');
  await page.getByLabel('Kind', { exact: true }).selectOption('bark');
  // data/species.json has two species of kind "bark": paper birch and slippery elm.
  await expect(page.getByTestId('catalogue-count')).toHaveText(/^2 of \d+ species$/);
  expect(await cards(page).getByRole('heading').allTextContents()).toEqual(['Paper birch', 'Slippery elm']);
  await page.getByLabel('Kind', { exact: true }).selectOption('');
  await page.getByLabel('Cautions', { exact: true }).selectOption('deadly');
  // data/species.json names a deadly lookalike for six species, the yellow morel among them.
  await expect(page.getByTestId('catalogue-count')).toHaveText(/^6 of \d+ species$/);
  await expect(cards(page).filter({ hasText: 'Yellow morel' })).toHaveCount(1);
  await expect(cards(page).filter({ hasText: 'Oyster mushroom' })).toHaveCount(0);
  expect(await page.evaluate(() => (window as unknown as { notReloaded?: boolean }).notReloaded)).toBe(true);

  // Cautions stay folded until asked for.
  await page.getByLabel('Cautions', { exact: true }).selectOption('any');
  await page.getByLabel('Search by name').fill('oyster');
  const card = cards(page).first();
  await expect(card.getByRole('listitem').first()).toBeHidden();
  await card.getByText(/^Cautions \(\d+\)/).click();
  await expect(card.getByRole('listitem').first()).toBeVisible();
});

test('given the catalogue without JavaScript, the search is a form the server answers', async ({ browser }) => {
  const context = await browser.newContext({ storageState: sessionFile('forager@example.org'), javaScriptEnabled: false });
  const page = await context.newPage();
  await page.goto('/catalogue?q=morchella');
  await expect(cards(page)).not.toHaveCount(0);
  for (const name of await cards(page).locator('p.italic').allTextContents()) expect(name.toLowerCase()).toContain('morchella');
  await context.close();
});

for (const width of [390, 1280]) {
  test(`given a window ${width} px wide, the catalogue is no wider than the window and opens short`, async ({ browser }) => {
    const context = await browser.newContext({ storageState: sessionFile('forager@example.org'), viewport: { width, height: 900 } });
    const page = await context.newPage();
    await page.goto('/catalogue');
    await page.locator('[data-hydrated="true"]').first().waitFor();
    const { scroll, window } = await pageWidth(page);
    expect(scroll).toBeLessThanOrEqual(window);
    // The list used to be about 8 000 px tall with every caution open; folded it is far shorter.
    const height = await page.evaluate(() => document.documentElement.scrollHeight);
    expect(height).toBeLessThan(width < 600 ? 7000 : 4000);
    await context.close();
  });
}

test('given the admin, a species is added with a sourced caution, edited with its history, and retired: gone from new allowances, kept where used', async ({ browser }) => {
  test.setTimeout(60_000);
  const name = `Spec ramp ${Date.now()}`;
  const admin = await pageAs(browser, 'admin@example.org');
  await admin.goto('/catalogue');
  await admin.getByRole('link', { name: 'Add a species' }).click();
  await admin.locator('form[data-hydrated]').waitFor();
  await admin.getByLabel('Common name', { exact: true }).fill(name);
  await admin.getByLabel('Scientific name', { exact: true }).fill('Allium specium');
  await admin.getByLabel('Kind', { exact: true }).selectOption('leaf');
  // A caution without a source is refused beside the field.
  await admin.getByLabel('Caution 1', { exact: true }).fill('Test caution: lily-of-the-valley grows beside it.');
  await admin.getByRole('button', { name: 'Add the species' }).click();
  await expect(admin.getByRole('alert').first()).toContainText('Name the source of this caution');
  await admin.getByLabel('Source of caution 1', { exact: true }).fill('A test field guide, 2021');
  await admin.getByLabel('Web address of the source (optional)').fill('https://example.org/test-guide');
  await admin.getByRole('button', { name: 'Add the species' }).click();
  await expect(admin.getByRole('status')).toContainText('Saved');
  const speciesId = admin.url().match(/species\/([0-9a-f-]{36})/)?.[1] ?? '';
  expect(speciesId).not.toBe('');

  // Walter allows it on a draft parcel before it is retired.
  const walter = await apiAs('landowner@example.org');
  const ring = [[west, south], [west + size, south], [west + size, south + size], [west, south + size], [west, south]];
  const created = await walter.post('/api/parcels', { data: { name: `Retirement lot ${Date.now()}`, timeZone: 'America/New_York', nearingThresholdPercent: 80, openToRequests: false, description: '', boundary: { type: 'Polygon', coordinates: [ring] } } });
  expect(created.status(), await created.text()).toBe(201);
  const parcelId = (await created.json()).parcel.id as string;
  const allow = (id: string) => walter.put(`/api/parcels/${parcelId}/allowances`, { data: { speciesId: id, seasons: [{ start: '04-01', end: '05-31' }], methods: ['cut'], limits: [{ scope: 'day', quantity: '200', unit: 'g' }] } });
  expect((await allow(speciesId)).status()).toBe(200);

  // A forager sees the caution and its source in the catalogue.
  const owen = await pageAs(browser, 'forager@example.org');
  await owen.goto(`/catalogue?q=${encodeURIComponent(name)}`);
  await owen.getByText(/^Cautions \(1\)/).click();
  await expect(owen.getByText('Test caution: lily-of-the-valley grows beside it.')).toBeVisible();
  await expect(owen.getByRole('link', { name: 'A test field guide, 2021' })).toHaveAttribute('href', 'https://example.org/test-guide');

  // The admin edits the caution; the history names who and what.
  await admin.locator('form[data-hydrated]').waitFor();
  await admin.getByLabel('Caution 1', { exact: true }).fill('Test caution: lily-of-the-valley and false hellebore grow beside it.');
  await admin.getByRole('button', { name: 'Save changes' }).click();
  await expect(admin.getByRole('status')).toContainText('Saved');
  const history = admin.getByTestId('species-history');
  await expect(history.getByRole('listitem').first()).toContainText('Nora Whitcomb changed it');
  await expect(history).toContainText('added “Test caution: lily-of-the-valley and false hellebore grow beside it. (source: A test field guide, 2021, https://example.org/test-guide)”');
  await expect(history).toContainText('removed “Test caution: lily-of-the-valley grows beside it.');
  await expect(history).toContainText('Nora Whitcomb added the species');
  await owen.reload();
  await owen.getByText(/^Cautions \(1\)/).click();
  await expect(owen.getByText('Test caution: lily-of-the-valley and false hellebore grow beside it.')).toBeVisible();

  // Retired after a confirmation.
  admin.once('dialog', (dialog) => dialog.accept());
  await admin.getByRole('button', { name: 'Retire this species' }).click();
  await expect(admin.getByRole('button', { name: 'Bring back into use' })).toBeVisible();
  await expect(history.getByRole('listitem').first()).toContainText('Nora Whitcomb retired it');

  // No longer offered to Walter for a new allowance on another parcel, and refused by the API there…
  const other = await walter.post('/api/parcels', { data: { name: `Second retirement lot ${Date.now()}`, timeZone: 'America/New_York', nearingThresholdPercent: 80, openToRequests: false, description: '', boundary: { type: 'Polygon', coordinates: [[[west + 0.01, south], [west + 0.01 + size, south], [west + 0.01 + size, south + size], [west + 0.01, south + size], [west + 0.01, south]]] } } });
  const otherId = (await other.json()).parcel.id as string;
  const walterPage = await pageAs(browser, 'landowner@example.org');
  await walterPage.goto(`/land/${otherId}/rules`);
  const options = await walterPage.locator('#allowance-species option').allTextContents();
  expect(options.length).toBeGreaterThan(10);
  expect(options.some((o) => o.startsWith(name))).toBe(false);
  const refused = await walter.put(`/api/parcels/${otherId}/allowances`, { data: { speciesId, seasons: [{ start: '04-01', end: '05-31' }], methods: ['cut'], limits: [{ scope: 'day', quantity: '200', unit: 'g' }] } });
  expect(refused.status()).toBe(409);
  expect((await refused.json()).error).toMatchObject({ code: 'species-retired', field: 'speciesId' });

  // …but kept where it was allowed, and still in the catalogue for those who ask for retired species.
  await walterPage.goto(`/land/${parcelId}/rules`);
  const row = walterPage.locator(`[data-allowance="${name}"]`);
  await expect(row.getByTestId('retired-species')).toBeVisible();
  await owen.goto(`/catalogue?q=${encodeURIComponent(name)}`);
  await expect(cards(owen)).toHaveCount(0);
  await owen.getByLabel('Show retired species').check();
  await expect(cards(owen)).toHaveCount(1);
  await expect(cards(owen)).toContainText('Retired');
  await walter.dispose();
});

test('given a forager, a landowner or a steward, the admin API answers 403 and changes nothing', async () => {
  const admin = await apiAs('admin@example.org');
  const { species } = (await (await admin.get('/api/species')).json()) as { species: { id: string; commonName: string; cautions: string[] }[] };
  const oyster = species.find((s) => s.commonName === 'Oyster mushroom');
  if (!oyster) throw new Error('the demo has no oyster mushroom');
  const body = { commonName: 'Hijacked', scientificName: 'Hijackus', kind: 'leaf', usualUnit: 'g', cautions: [{ text: 'x', sourceTitle: 'y' }] };
  for (const email of ['forager@example.org', 'landowner@example.org', 'steward@example.org']) {
    const other = await apiAs(email);
    const answers = [
      await other.post('/api/species', { data: body }),
      await other.put(`/api/species/${oyster.id}`, { data: body }),
      await other.post(`/api/species/${oyster.id}/retirement`, { data: { retired: true } }),
      await other.get(`/api/species/${oyster.id}/history`),
      await other.post(`/api/accounts/${oyster.id}/landowner-decision`, { data: { outcome: 'verified' } }),
    ];
    expect(answers.map((a) => a.status()), email).toEqual([403, 403, 403, 403, 403]);
    const page = await other.get('/catalogue/species/new', { maxRedirects: 0 });
    expect([302, 303, 403, 404]).toContain(page.status());
    await other.dispose();
  }
  const after = (await (await admin.get('/api/species')).json()) as { species: { id: string; commonName: string; cautions: string[]; retiredAt: string | null }[] };
  expect(after.species.find((s) => s.id === oyster.id)).toMatchObject({ commonName: 'Oyster mushroom', cautions: oyster.cautions, retiredAt: null });
  expect(after.species.some((s) => s.commonName === 'Hijacked')).toBe(false);
  await admin.dispose();
});

test('given Dale, an unverified landowner, the admin reads what he sent, confirms, and Dale is e-mailed that he is verified', async ({ browser, request }) => {
  const before = (await mailFor(request, 'dale.hosmer@example.org')).length;
  const admin = await pageAs(browser, 'admin@example.org');
  await admin.goto('/accounts');
  await admin.getByRole('row').filter({ hasText: 'dale.hosmer@example.org' }).getByRole('link', { name: /Review/ }).click();
  const claim = admin.getByTestId('landowner-claim');
  // data/demo/sign-ups.json
  await expect(claim).toContainText('Dale Hosmer');
  await expect(claim).toContainText('Hosmer Sugarbush, about 40 acres on the north side of Hobblebush Road');
  await expect(claim).toContainText('My family has tapped this sugarbush since 1962.');

  await admin.locator('form[data-hydrated]').waitFor();
  await admin.getByRole('button', { name: 'Verify…' }).click();
  const confirm = admin.getByRole('alertdialog');
  await expect(confirm).toContainText('Verify Dale Hosmer as a landowner?');
  // Going back sends nothing.
  await confirm.getByRole('button', { name: 'Go back' }).click();
  expect((await mailFor(request, 'dale.hosmer@example.org')).length).toBe(before);
  await admin.getByRole('button', { name: 'Verify…' }).click();
  await admin.getByRole('alertdialog').getByRole('button', { name: 'Yes, verify and e-mail them' }).click();
  await expect(admin.getByRole('status')).toHaveText('Landowner verified; they have been e-mailed.');
  await expect(admin.getByRole('row').filter({ hasText: 'dale.hosmer@example.org' })).toContainText('verified');

  await expect.poll(async () => (await mailFor(request, 'dale.hosmer@example.org')).length).toBe(before + 1);
  const [mail] = await mailFor(request, 'dale.hosmer@example.org');
  expect(mail?.subject).toBe('Your landowner account is verified');
  expect(mail?.text).toContain('You can now list parcels for foragers to find, grant permits and decide access requests.');
});

test('given a new landowner\'s claim, a decline needs a reason beside the field, and the reason is e-mailed to them', async ({ browser, request }) => {
  const email = `declined.${Date.now()}@example.org`;
  const signedUp = await request.post('/api/sign-up', { data: { email, name: 'Ivo Testerman', managesLand: true, claimedLand: 'Test Hollow, 12 acres', signUpNote: 'Ask me for the deed.' } });
  expect(signedUp.status(), await signedUp.text()).toBe(201);
  const admin = await pageAs(browser, 'admin@example.org');
  await admin.goto('/accounts');
  await admin.getByRole('row').filter({ hasText: email }).getByRole('link', { name: /Review/ }).click();
  await expect(admin.getByTestId('landowner-claim')).toContainText('Test Hollow, 12 acres');
  await expect(admin.getByTestId('landowner-claim')).toContainText('Ask me for the deed.');
  await admin.locator('form[data-hydrated]').waitFor();
  await admin.getByText('Decline for now, with a reason').click();
  await admin.getByRole('button', { name: 'Decline…' }).click();
  await expect(admin.getByRole('alert')).toHaveText('Say why, so the landowner knows what to send or change.');
  await expect(admin.getByRole('alertdialog')).toHaveCount(0);
  await admin.getByLabel('Reason (sent to them)').fill('Send a copy of the deed or the tax bill.');
  await admin.getByRole('button', { name: 'Decline…' }).click();
  await admin.getByRole('alertdialog').getByRole('button', { name: 'Yes, decline and e-mail them' }).click();
  await expect(admin.getByRole('status')).toHaveText('Landowner declined; they have been e-mailed the reason.');
  await expect(admin.getByRole('row').filter({ hasText: email })).toContainText('declined');
  let text = '';
  await expect.poll(async () => {
    text = (await mailFor(request, email)).find((m) => m.subject === 'Your landowner account was not verified')?.text ?? '';
    return text;
  }).not.toBe('');
  expect(text).toContain('"Send a copy of the deed or the tax bill."');
});
