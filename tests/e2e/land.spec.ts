import { join } from 'node:path';
import { expect, test, type Page } from '@playwright/test';
import { mailFor, pageAs } from './support';

/** The landowner's half of the job, in Chromium, against the seeded demo (data/demo). */

async function drawSquare(page: Page, testId: string) {
  const map = page.getByTestId(testId);
  await expect(map.locator('.leaflet-container')).toBeVisible();
  await map.locator('[title="Draw an area"]').click();
  const box = await map.locator('.leaflet-container').boundingBox();
  if (!box) throw new Error('the map has no size');
  const at = (x: number, y: number) => ({ x: box.x + box.width * x, y: box.y + box.height * y });
  for (const p of [at(0.4, 0.4), at(0.6, 0.4), at(0.6, 0.6), at(0.4, 0.6), at(0.4, 0.4)]) await page.mouse.click(p.x, p.y);
}

test('given a verified landowner, it draws a parcel, uploads two more, sets an allowance across New Year and grants a permit', async ({ browser }) => {
  const page = await pageAs(browser, 'landowner@example.org');

  await page.goto('/land/new');
  await drawSquare(page, 'draw-map-create');
  await page.getByRole('button', { name: 'Check the drawing' }).click();
  await expect(page.getByTestId('boundary-check')).toContainText('ready to save');
  await page.getByLabel('Parcel name').fill('Drawn test lot');
  await page.getByRole('button', { name: 'Save parcel' }).click();
  await expect(page).toHaveURL(/\/land\/[0-9a-f-]{36}$/);
  await expect(page.getByRole('heading', { level: 1 })).toHaveText('Drawn test lot');
  await expect(page.getByTestId('parcel-facts')).toContainText('ha');
  const parcelUrl = page.url();

  // An allowance whose season crosses New Year (chaga-style: 1 Nov – 15 Mar), on the parcel's "What may be taken" page.
  await page.getByTestId('parcel-nav').getByRole('link', { name: 'What may be taken' }).click();
  await expect(page).toHaveURL(`${parcelUrl}/rules`);
  await page.getByText('Allow a species').click();
  const form = page.getByTestId('allowance-form');
  await form.getByLabel('Species').selectOption({ label: 'Chaga' });
  await form.getByLabel('Season 1 start').fill('11-01');
  await form.getByLabel('Season 1 end').fill('03-15');
  await form.getByLabel('strip bark').check();
  await form.getByLabel('Limit 1 quantity').fill('250');
  await form.getByLabel('Limit 1 unit').selectOption('g');
  await form.getByRole('button', { name: 'Save allowance' }).click();
  // The window in words, as every screen writes one (month abbreviations as en-US writes them): 1 Nov – 15 Mar crosses New Year.
  await expect(page.getByTestId('allowances')).toContainText('Nov 1 – Mar 15, across New Year');
  await expect(page.getByTestId('allowances')).toContainText('250 g a visit');

  // A permit for a forager, by e-mail.
  await page.getByTestId('parcel-nav').getByRole('link', { name: 'Permits' }).click();
  await expect(page).toHaveURL(`${parcelUrl}/permits`);
  const grant = page.getByTestId('grant');
  await grant.getByLabel(/Forager's e-mail/).fill('hattie.brule@example.org');
  await grant.getByRole('button', { name: 'Grant permit' }).click();
  await expect(page.getByTestId('permits')).toContainText('Hattie Brule');
  // The new parcel has no terms and the permit no fee, and it begins today: nothing is missing, so it is active.
  await expect(page.getByTestId('permits').locator('[data-state="active"]').first()).toBeVisible();
  await expect.poll(async () => (await mailFor(page.request, 'hattie.brule@example.org')).some((m) => m.subject.includes('Drawn test lot'))).toBe(true);

  // Two polygons from one GeoJSON file, merged into one parcel in parts.
  await page.goto('/land/new');
  await page.getByRole('tab', { name: 'Upload a file' }).click();
  await page.getByLabel(/Boundary file/).setInputFiles(join(import.meta.dirname, 'fixtures', 'two-lots.geojson'));
  await expect(page.getByTestId('boundary-check')).toContainText('The file holds 2 polygons');
  await page.getByLabel('merge them into one parcel in parts').check();
  await page.getByLabel('Parcel name').fill('Uploaded lots');
  await page.getByRole('button', { name: 'Save parcel' }).click();
  await expect(page.getByRole('heading', { level: 1 })).toHaveText('Uploaded lots');

  await page.goto('/land');
  await expect(page.getByTestId('parcel-list')).toContainText('Drawn test lot');
  await expect(page.getByTestId('parcel-list')).toContainText('Uploaded lots');
});
