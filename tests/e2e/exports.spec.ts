import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { DOMParser } from '@xmldom/xmldom';
import { expect, test, type Page } from '@playwright/test';
import { apiAs, baseURL, pageAs } from './support';

/**
 * Boundary downloads and the find-land map, against the seeded demo. The expected boundaries are
 * data/demo/parcels.geojson's, read here from the file itself; zones from data/demo/zones.geojson.
 */
type DemoFeature = { properties: { name: string }; geometry: { type: 'Polygon' | 'MultiPolygon'; coordinates: number[][][] | number[][][][] } };
const demoDir = join(import.meta.dirname, '..', '..', 'data', 'demo');
const demoParcels = (JSON.parse(readFileSync(join(demoDir, 'parcels.geojson'), 'utf8')) as { features: DemoFeature[] }).features;
const demoRings = (name: string): number[][][] => {
  const feature = demoParcels.find((f) => f.properties.name === name);
  if (!feature) throw new Error(`the demo has no ${name}`);
  return feature.geometry.type === 'Polygon' ? (feature.geometry.coordinates as number[][][]) : (feature.geometry.coordinates as number[][][][]).flat();
};

/** Same vertices within 1e-9°, whichever way round the ring is written (a file winds it as RFC 7946 §3.1.6 asks). */
function expectSameRing(actual: number[][], expected: number[][]) {
  expect(actual).toHaveLength(expected.length);
  const near = (a: number[], b: number[]) => Math.abs(a[0]! - b[0]!) <= 1e-9 && Math.abs(a[1]! - b[1]!) <= 1e-9;
  const forwards = actual.every((p, i) => near(p, expected[i]!));
  const backwards = actual.every((p, i) => near(p, expected[expected.length - 1 - i]!));
  expect(forwards || backwards, `${JSON.stringify(actual)} against ${JSON.stringify(expected)}`).toBe(true);
}

async function cobbleRidgeId(page: Page) {
  const { parcels } = (await (await page.request.get('/api/parcels')).json()) as { parcels: { id: string; name: string }[] };
  const id = parcels.find((p) => p.name === 'Cobble Ridge Lot')?.id;
  if (!id) throw new Error('Walter has no Cobble Ridge Lot');
  return id;
}

const mimeTypes = { geojson: 'application/geo+json', kml: 'application/vnd.google-earth.kml+xml', gpx: 'application/gpx+xml' } as const;

test("given Walter's parcel page, each download parses, names the zones, and the boundary importer reads back the same boundary", async ({ browser }) => {
  const page = await pageAs(browser, 'landowner@example.org');
  const id = await cobbleRidgeId(page);
  await page.goto(`/land/${id}`);
  const links = page.getByTestId('parcel-exports');
  const [outer] = demoRings('Cobble Ridge Lot');
  for (const [label, format] of [['GeoJSON', 'geojson'], ['KML', 'kml'], ['GPX', 'gpx']] as const) {
    const [download] = await Promise.all([page.waitForEvent('download'), links.getByRole('link', { name: label }).click()]);
    expect(download.suggestedFilename()).toBe(`cobble-ridge-lot.${format}`);
    const text = readFileSync((await download.path())!, 'utf8');
    if (format === 'geojson') {
      const json = JSON.parse(text);
      expect(json.type).toBe('FeatureCollection');
      expect(json.features.map((f: { properties: { name: string } }) => f.properties.name)).toEqual(['Cobble Ridge Lot', 'No-harvest zone: Deer stand', 'No-harvest zone: Spring seep']);
    } else {
      const doc = new DOMParser().parseFromString(text, 'text/xml');
      const items = Array.from(doc.getElementsByTagName(format === 'kml' ? 'Placemark' : 'trk'));
      expect(items.map((el) => el.getElementsByTagName('name')[0]?.textContent)).toEqual(['Cobble Ridge Lot', 'No-harvest zone: Deer stand', 'No-harvest zone: Spring seep']);
      expect(items[2]?.getElementsByTagName(format === 'kml' ? 'description' : 'desc')[0]?.textContent).toContain("lady's slipper orchids");
    }
    // Sent back to the boundary importer as an upload, as a landowner would.
    const checked = await page.request.post('/api/boundaries/check', {
      headers: { origin: baseURL },
      multipart: { file: { name: download.suggestedFilename(), mimeType: mimeTypes[format], buffer: Buffer.from(text) } },
    });
    expect(checked.status(), await checked.text()).toBe(200);
    const answer = (await checked.json()) as { format: string; features: { name: string; geometry: { type: string; coordinates: number[][][] } }[] };
    expect(answer.format).toBe(format);
    const land = answer.features.filter((f) => f.name === 'Cobble Ridge Lot');
    expect(land).toHaveLength(1);
    expect(land[0]!.geometry.type).toBe('Polygon');
    expectSameRing(land[0]!.geometry.coordinates[0]!, outer!);
  }
});

test("given another landowner, a forager or an unknown format, Walter's parcel is not there to download; a forager's download holds only the parcels of their permits", async () => {
  const walter = await apiAs('landowner@example.org');
  const { parcels } = (await (await walter.get('/api/parcels')).json()) as { parcels: { id: string; name: string }[] };
  const id = parcels.find((p) => p.name === 'Cobble Ridge Lot')!.id;
  const ok = await walter.get(`/api/parcels/${id}/export.gpx`);
  expect(ok.status()).toBe(200);
  expect(ok.headers()['content-disposition']).toBe('attachment; filename="cobble-ridge-lot.gpx"');
  expect(ok.headers()['content-type']).toContain('application/gpx+xml');
  expect((await walter.get(`/api/parcels/${id}/export.shp`)).status()).toBe(404);

  const june = await apiAs('june.farrand@example.org');
  const other = await june.get(`/api/parcels/${id}/export.geojson`);
  expect(other.status()).toBe(404);
  expect(await other.text()).not.toContain('Cobble Ridge Lot');

  const owen = await apiAs('forager@example.org');
  expect((await owen.get(`/api/parcels/${id}/export.kml`)).status()).toBe(403);
  // data/demo/scenario.json: Owen holds an active permit on Cobble Ridge Lot; his Farrand Woodlots permit expired, he is in no club
  // (so not on Farrand Sugarbush) and holds nothing on Alder Bottom. (Another spec may since have given him Pelletier Hill Farm.)
  const mine = await owen.get('/api/field/export.geojson');
  expect(mine.status()).toBe(200);
  expect(mine.headers()['content-disposition']).toMatch(/^attachment; filename="tallywood-parcels-\d{4}-\d{2}-\d{2}\.geojson"$/);
  const names = ((await mine.json()) as { features: { properties: { name: string; kind: string } }[] }).features.filter((f) => f.properties.kind === 'parcel').map((f) => f.properties.name);
  expect(names).toContain('Cobble Ridge Lot');
  for (const never of ['Farrand Woodlots', 'Farrand Sugarbush', 'Alder Bottom']) expect(names).not.toContain(never);
});

test("given Owen on My permits, the find-land map shows Farrand Woodlots at its rough location with a link to ask, and the page never holds its boundary", async ({ browser }, testInfo) => {
  const page = await pageAs(browser, 'forager@example.org');
  const response = await page.goto('/my-permits');
  const html = (await response!.text()) + JSON.stringify(await (await page.request.get('/api/open-parcels')).json());

  const map = page.getByTestId('find-land-map');
  await map.scrollIntoViewIfNeeded();
  const marker = map.locator('.tallywood-rough-marker[title*="Farrand Woodlots"]');
  await expect(marker).toBeVisible();
  await marker.click();
  const popup = map.getByTestId('rough-location-popup');
  const ask = popup.getByRole('link', { name: 'Ask for access to Farrand Woodlots' });
  await expect(ask).toBeVisible();
  await ask.click();
  const card = page.getByTestId('open-parcels').locator('[data-parcel="Farrand Woodlots"]');
  await expect(page).toHaveURL(new RegExp(`#${await card.getAttribute('id')}$`));
  await expect(card.getByLabel(/What you would like to harvest/)).toBeVisible();

  // No vertex of Farrand Woodlots (data/demo/parcels.geojson, six decimals) is in the page, its map or the open-parcels JSON.
  const rendered = await page.content();
  for (const [lon, lat] of demoRings('Farrand Woodlots').flat()) {
    for (const value of [lon, lat]) {
      expect(html).not.toContain(String(value));
      expect(rendered).not.toContain(String(value));
    }
  }

  // The download links for the parcels Owen may use are there too.
  const [download] = await Promise.all([page.waitForEvent('download'), page.getByTestId('permit-exports').getByRole('link', { name: 'GPX' }).click()]);
  const tracks = new DOMParser().parseFromString(readFileSync((await download.path())!, 'utf8'), 'text/xml').getElementsByTagName('trk');
  expect(Array.from(tracks).map((t) => t.getElementsByTagName('name')[0]?.textContent)).toContain('Cobble Ridge Lot');

  for (const width of [1280, 390]) {
    await page.setViewportSize({ width, height: 900 });
    await page.goto('/my-permits');
    await page.getByTestId('find-land-map').scrollIntoViewIfNeeded();
    await page.locator('.tallywood-rough-marker[title*="Farrand Woodlots"]').click();
    await expect(page.getByTestId('rough-location-popup')).toBeVisible();
    // Leaflet fades a popup in and pans the map to fit it; the picture is taken once both are done.
    await expect.poll(() => page.locator('.leaflet-popup').evaluate((el) => getComputedStyle(el).opacity)).toBe('1');
    await expect(page.locator('.leaflet-tooltip')).toHaveCount(0);
    await expect.poll(() => page.locator('.leaflet-popup').evaluate((el) => el.getBoundingClientRect().top >= el.closest('.leaflet-container')!.getBoundingClientRect().top)).toBe(true);
    expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(width);
    await page.screenshot({ path: testInfo.outputPath(`my-permits-${width}.png`) });
  }
});

test("given Walter's parcel page at 390 px, the download links fit the screen", async ({ browser }, testInfo) => {
  const page = await pageAs(browser, 'landowner@example.org');
  const id = await cobbleRidgeId(page);
  for (const width of [1280, 390]) {
    await page.setViewportSize({ width, height: 900 });
    await page.goto(`/land/${id}`);
    await expect(page.getByTestId('parcel-exports').getByRole('link', { name: 'GPX' })).toBeVisible();
    expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(width);
    await page.screenshot({ path: testInfo.outputPath(`parcel-${width}.png`), fullPage: false });
  }
});
