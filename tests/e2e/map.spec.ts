import { expect, test } from '@playwright/test';
import { pageAs } from './support';

/**
 * The map island against the seeded demo (data/demo), with no tile server configured: our plain
 * tiles, the valley's lines from data/demo/base-features.geojson under the parcels, names on the map.
 */

test("given a landowner's land page, the map draws the valley's brook under the parcels and plain tiles without their z/x/y", async ({ browser }) => {
  const page = await pageAs(browser, 'landowner@example.org');
  await page.goto('/land');
  const map = page.getByTestId('land-map');
  await expect(map.locator('.leaflet-container')).toBeVisible();

  const brook = map.locator('path.tallywood-base-brook');
  await expect(brook).toHaveCount(1);
  // Drawn: a path with segments, not Leaflet's empty "M0 0" for a line outside the view.
  await expect.poll(async () => ((await brook.getAttribute('d')) ?? '').split(/L/).length).toBeGreaterThan(3);
  // Under the parcels, and it lets every click through to them.
  expect(await brook.evaluate((path) => getComputedStyle(path).pointerEvents)).toBe('none');
  const paneOf = (selector: string) => map.locator(selector).first().evaluate((el) => Number(getComputedStyle(el.closest('.leaflet-pane')!).zIndex));
  expect(await paneOf('path.tallywood-base-brook')).toBeLessThan(await paneOf('path.leaflet-interactive'));

  const tiles = map.locator('img.leaflet-tile');
  await expect(tiles.first()).toBeVisible();
  const sources = await tiles.evaluateAll((images) => images.map((image) => (image as HTMLImageElement).src));
  expect(sources.length).toBeGreaterThan(0);
  for (const source of sources) {
    const address = source.match(/\/tiles\/(\d+)\/(\d+)\/(\d+)\.svg/);
    expect(address, source).not.toBeNull();
    const response = await page.request.get(source);
    expect(response.status()).toBe(200);
    expect(response.headers()['cache-control']).toBe('public, max-age=31536000, immutable');
    const svg = await response.text();
    expect(svg).not.toContain(`${address![1]}/${address![2]}/${address![3]}`);
    expect(svg).not.toMatch(/\d+\/\d+\/\d+/);
    expect(svg.match(/<text/g)?.length ?? 0).toBeLessThanOrEqual(1);
  }
});

test("given a parcel page, its name is written on the map and its no-harvest zones are hatched and listed", async ({ browser }) => {
  const page = await pageAs(browser, 'landowner@example.org');
  await page.goto('/land');
  await page.getByTestId('parcel-list').getByRole('link', { name: 'Cobble Ridge Lot' }).click();
  const map = page.getByTestId('parcel-map');
  await expect(map.locator('.leaflet-container')).toBeVisible();

  await expect(map.locator('.tallywood-area-label', { hasText: 'Cobble Ridge Lot' })).toBeVisible();
  // The two zones of data/demo/zones.geojson, filled with the hatch pattern.
  await expect(map.locator('path[fill^="url(#tallywood-hatch"]')).toHaveCount(2);
  const list = map.getByRole('list');
  await expect(list).toContainText('No-harvest zone: Spring seep');
  await expect(list).toContainText('No-harvest zone: Deer stand');
});
