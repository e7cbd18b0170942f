import { expect, test } from '@playwright/test';
import { apiAs, pageAs } from './support';

/**
 * Words a landowner reads about permits and requests, on the demo (data/demo/scenario.json): Three
 * Ridges' waiting request for Cobble Ridge Lot quotes what Marisol wrote when asking, not the
 * scenario's description of it; its expired permit there accepted terms version 1 of 2, and Owen's
 * active one accepted version 2, the newest.
 */
let cobbleRidge = '';
test.beforeAll(async () => {
  const walter = await apiAs('landowner@example.org');
  const { parcels } = (await (await walter.get('/api/parcels')).json()) as { parcels: { id: string; name: string }[] };
  cobbleRidge = parcels.find((p) => p.name === 'Cobble Ridge Lot')?.id ?? '';
  await walter.dispose();
});

test("given the club's request waiting, its card quotes only what the requester wrote, as theirs", async ({ browser }) => {
  const page = await pageAs(browser, 'landowner@example.org');
  await page.goto('/requests');
  const card = page.getByTestId('requests').locator('li').filter({ hasText: 'Three Ridges Foraging Society (club)' }).filter({ hasText: 'Cobble Ridge Lot' });
  await expect(card.getByTestId('request-note')).toHaveText('They wrote: “The club would like access again next season, ending before rifle season as before.”');
  await expect(page.getByText('waiting for the owner')).toHaveCount(0);
  await page.context().close();
});

test('given a permit that accepted an older terms version, the parcel says which one and that a newer one is not yet accepted', async ({ browser }) => {
  const page = await pageAs(browser, 'landowner@example.org');
  await page.goto(`/land/${cobbleRidge}/permits`);
  const permits = page.getByTestId('permits');
  const expiredClub = permits.locator('li[data-permit]').filter({ hasText: 'Three Ridges Foraging Society (club)' }).filter({ has: page.locator('[data-state="expired"]') });
  await expect(expiredClub.getByTestId('permit-terms')).toHaveText('accepted terms version 1; version 2 is newer and not yet accepted');
  const owens = permits.locator('li[data-permit]').filter({ hasText: 'Owen' }).filter({ has: page.locator('[data-state="active"]') });
  await expect(owens.getByTestId('permit-terms')).toHaveText('terms accepted (version 2)');
  await page.context().close();
});
