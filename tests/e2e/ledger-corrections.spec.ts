import { randomUUID } from 'node:crypto';
import { expect, test, type APIRequestContext, type Page } from '@playwright/test';
import { apiAs, pageAs, sessionFile } from './support';

/*
 * Correcting an entry from My ledger, the ledger on a phone, and who may open an entry's photo.
 *
 * Walter makes a parcel of his own for this file, clear of the demo valley and of the other specs'
 * parcels (this one −73.030…−73.027, 43.800…43.803), allows oyster mushrooms all year with a day
 * limit of 600 g, and grants Owen (forager@example.org) a permit. Owen checks in and records three
 * entries the same day through the API — 300 g (with a photo), 100 g and 150 g: 550 g of 600 g —
 * so nothing here depends on the demo's dates.
 */
const west = -73.03;
const south = 43.8;
const size = 0.003;
const centre = { longitude: west + size / 2, latitude: south + size / 2 };
const parcelName = `Ledger corrections lot ${Date.now()}`;
const zone = 'America/New_York';

type ApiEntry = { id: string; recordedAt: string; localDate: string; breach: boolean; correctsEntryId: string | null; rootEntryId: string | null; correctionReason: string | null; quantities: { quantity: string; unit: string }[] };

let walter: APIRequestContext;
let owen: APIRequestContext;
let parcelId = '';
let oysterId = '';
let visitId = '';
let photoId = '';
let original: Buffer = Buffer.alloc(0);
const entries = { weighed: '', twice: '', under: '' };

test.describe.configure({ mode: 'serial' });

test.beforeAll(async () => {
  [walter, owen] = await Promise.all([apiAs('landowner@example.org'), apiAs('forager@example.org')]);
  const ring = [[west, south], [west + size, south], [west + size, south + size], [west, south + size], [west, south]];
  const created = await walter.post('/api/parcels', { data: { name: parcelName, timeZone: zone, nearingThresholdPercent: 80, openToRequests: false, description: '', boundary: { type: 'Polygon', coordinates: [ring] } } });
  expect(created.status(), await created.text()).toBe(201);
  parcelId = (await created.json()).parcel.id;
  const { species } = (await (await walter.get('/api/species')).json()) as { species: { id: string; commonName: string }[] };
  oysterId = species.find((s) => s.commonName === 'Oyster mushroom')?.id ?? '';
  const allowed = await walter.put(`/api/parcels/${parcelId}/allowances`, { data: { speciesId: oysterId, seasons: [{ start: '01-01', end: '12-31' }], methods: ['pick'], limits: [{ scope: 'day', quantity: '600', unit: 'g' }] } });
  expect(allowed.status(), await allowed.text()).toBe(200);
  const granted = await walter.post(`/api/parcels/${parcelId}/permits`, { data: { holder: { kind: 'forager', email: 'forager@example.org' }, startsOn: '2020-01-01', endsOn: '2099-12-31' } });
  expect(granted.status(), await granted.text()).toBe(201);
  const checkIn = await owen.post('/api/check-ins', { data: { ...centre, accuracyM: 5 } });
  expect(checkIn.status(), await checkIn.text()).toBe(200);
  const answer = await checkIn.json();
  expect(answer).toMatchObject({ verdict: 'clear', parcel: { id: parcelId } });
  visitId = answer.visitId;

  // A photo with the camera's position in its EXIF GPS tags (EXIF 2.32 GPS IFD), as a phone writes it.
  const sharp = (await import('sharp')).default;
  const exif = { IFD3: { GPSLatitudeRef: 'N', GPSLatitude: '43/1 48/1 3/1', GPSLongitudeRef: 'W', GPSLongitude: '73/1 1/1 39/1' } };
  original = await sharp({ create: { width: 24, height: 18, channels: 3, background: '#8a6d3b' } }).jpeg().withExif(exif).toBuffer();
  const upload = await owen.post('/api/photos', { multipart: { photo: { name: 'oysters.jpg', mimeType: 'image/jpeg', buffer: original } } });
  expect(upload.status(), await upload.text()).toBe(201);
  photoId = (await upload.json()).uploadId;

  const record = async (grams: string, extra: Record<string, unknown> = {}) => {
    const saved = await owen.post('/api/harvest-entries', { data: { idempotencyKey: randomUUID(), visitId, speciesId: oysterId, method: 'pick', quantities: [{ quantity: grams, unit: 'g' }], ...extra } });
    expect(saved.status(), await saved.text()).toBe(201);
    return (await saved.json()).entry.id as string;
  };
  entries.weighed = await record('300', { photoUploadId: photoId });
  entries.twice = await record('100');
  entries.under = await record('150');
});

test.afterAll(async () => {
  // Archived, the parcel takes no more check-ins, so a later run in the same database finds only its own parcel here.
  await walter?.patch(`/api/parcels/${parcelId}`, { data: { status: 'archived' } });
  await Promise.all([walter, owen].map((c) => c?.dispose()));
});

/** Owen's entries on this parcel, from the JSON ledger. */
async function ledger(): Promise<ApiEntry[]> {
  const response = await owen.get(`/api/ledger?parcelId=${parcelId}`);
  expect(response.status()).toBe(200);
  return (await response.json()).entries;
}

/** The day an instant falls on in the parcel's zone, as en-US writes it (IANA tz data through Intl, not our code). */
const localDay = (instant: string) => new Intl.DateTimeFormat('en-US', { timeZone: zone, year: 'numeric', month: 'short', day: 'numeric' }).format(new Date(instant));

async function openLedger(page: Page) {
  await page.goto('/ledger');
  await page.locator('[data-testid="ledger-table"][data-hydrated="true"]').waitFor();
}

/** Opens an entry's details and its correction form. */
async function startCorrecting(page: Page, entryId: string) {
  const details = page.locator(`[data-details-for="${entryId}"]`);
  if (!(await details.isVisible())) await page.locator(`tr[data-entry="${entryId}"]`).getByTestId('entry-toggle').click();
  await details.getByRole('button', { name: 'Correct this entry' }).click();
  const form = details.getByTestId('correction-form');
  await expect(form).toBeVisible();
  return { details, form };
}

const oysterTotal = (page: Page) => page.locator(`[data-testid="ledger-totals"] tr[data-parcel="${parcelName}"][data-species="Oyster mushroom"] td[data-total]`);

test('given three entries of 300, 100 and 150 g, Owen corrects the first to 250 g with a reason and sees the chain and the new total', async ({ browser }) => {
  const page = await pageAs(browser, 'forager@example.org');
  await openLedger(page);
  // 300 + 100 + 150 = 550 g.
  await expect(oysterTotal(page)).toHaveAttribute('data-total', '550');

  const { details, form } = await startCorrecting(page, entries.weighed);
  await expect(form.getByTestId('correction-chain').locator('li')).toHaveCount(1);
  await expect(form.getByTestId('correction-unit')).toHaveText('g');
  await form.getByLabel('New quantity').fill('250');
  await form.getByLabel('Reason').fill('Weighed again at home, without the basket');
  await form.getByRole('button', { name: 'Save correction' }).click();

  const saved = details.getByTestId('correction-saved');
  await expect(saved).toContainText('Correction saved');
  await expect(saved).toContainText('now counts 250 g (it counted 300 g)');
  // The form is gone; the confirmation has the focus, so a screen reader reads it and the eye finds it.
  await expect(saved).toBeFocused();
  // 250 + 100 + 150 = 500 g.
  await expect(oysterTotal(page)).toHaveAttribute('data-total', '500');
  await expect(oysterTotal(page)).toHaveText('500 g');

  const chain = (await ledger()).filter((e) => e.id === entries.weighed || e.rootEntryId === entries.weighed);
  const correction = chain.find((e) => e.correctsEntryId === entries.weighed);
  expect(correction).toMatchObject({ correctionReason: 'Weighed again at home, without the basket', quantities: [{ quantity: '-50', unit: 'g' }] });
  // The correction's row sits under the entry, signed.
  const row = page.locator(`tr[data-entry="${correction?.id}"]`);
  await expect(row).toHaveAttribute('data-depth', '1');
  await expect(row.getByTestId('entry-quantity')).toHaveText('−50 g');

  // Opened again, the form shows the chain: the original and the correction, each on the parcel's day, with the reason.
  const again = await startCorrecting(page, entries.weighed);
  const items = again.form.getByTestId('correction-chain').locator('li');
  await expect(items).toHaveCount(2);
  const first = chain.find((e) => e.id === entries.weighed);
  await expect(items.nth(0)).toContainText(`Recorded ${localDay(first?.recordedAt ?? '')}: 300 g`);
  await expect(items.nth(1)).toContainText(`Correction ${localDay(correction?.recordedAt ?? '')}: −50 g — “Weighed again at home, without the basket”`);
  await expect(again.form.getByTestId('chain-counts')).toContainText('It counts 250 g now');
  await again.form.getByRole('button', { name: 'Cancel' }).click();
  await page.context().close();
});

test('given an entry recorded twice, Owen takes it back entirely and the total loses it', async ({ browser }) => {
  const page = await pageAs(browser, 'forager@example.org');
  await openLedger(page);
  const { details, form } = await startCorrecting(page, entries.twice);
  await form.getByLabel('Take it back entirely').check();
  await expect(form.getByLabel('New quantity')).toHaveCount(0);
  await form.getByLabel('Reason').fill('Recorded twice by mistake');
  await form.getByRole('button', { name: 'Take it back' }).click();
  await expect(details.getByTestId('correction-saved')).toContainText('taken back entirely: it now counts nothing (it counted 100 g)');
  // 250 + 0 + 150 = 400 g.
  await expect(oysterTotal(page)).toHaveAttribute('data-total', '400');
  const reversal = (await ledger()).find((e) => e.correctsEntryId === entries.twice);
  expect(reversal).toMatchObject({ correctionReason: 'Recorded twice by mistake', quantities: [{ quantity: '-100', unit: 'g' }] });
  await expect(page.locator(`tr[data-entry="${entries.twice}"] [data-flag="corrected"]:visible`)).toHaveCount(1);
  await page.context().close();
});

test('given no reason, the error stands beside the Reason field and nothing is saved', async ({ browser }) => {
  const page = await pageAs(browser, 'forager@example.org');
  await openLedger(page);
  const before = (await ledger()).length;
  const { form } = await startCorrecting(page, entries.under);
  await form.getByLabel('New quantity').fill('120');
  await form.getByRole('button', { name: 'Save correction' }).click();
  const reason = form.getByLabel('Reason');
  await expect(reason).toHaveAttribute('aria-invalid', 'true');
  const errorId = await reason.getAttribute('aria-describedby');
  await expect(form.locator(`[id="${errorId}"]`)).toHaveText('Say why you correct the entry.');
  // A quantity that is not a number is told beside its own field.
  await form.getByLabel('New quantity').fill('a lot');
  await form.getByRole('button', { name: 'Save correction' }).click();
  await expect(form.getByRole('alert').filter({ hasText: 'Enter a number, like 250 or 1.5' })).toBeVisible();
  expect((await ledger()).length).toBe(before);
  await page.context().close();
});

test('given a correction that would take the day over its 600 g limit, Owen is asked to confirm going over, as in the Field, and it is recorded as a breach', async ({ browser }) => {
  const page = await pageAs(browser, 'forager@example.org');
  await openLedger(page);
  const { details, form } = await startCorrecting(page, entries.under);
  // 250 + 0 + 400 = 650 g, past the 600 g day limit.
  await form.getByLabel('New quantity').fill('400');
  await form.getByLabel('Reason').fill('Forgot the second bag');
  await form.getByRole('button', { name: 'Save correction' }).click();
  const over = form.getByTestId('correction-over');
  await expect(over).toContainText('would take a limit over on the day it counts on');
  await expect(over.locator('[data-state="over"]')).toContainText('650 / 600 g');
  const save = form.getByRole('button', { name: 'Save correction' });
  await expect(save).toBeDisabled();
  expect((await ledger()).some((e) => e.correctsEntryId === entries.under)).toBe(false);

  await over.getByRole('checkbox').check();
  await save.click();
  await expect(details.getByTestId('correction-saved')).toContainText('It takes a limit over');
  await expect(oysterTotal(page)).toHaveAttribute('data-total', '650');
  const correction = (await ledger()).find((e) => e.correctsEntryId === entries.under);
  expect(correction).toMatchObject({ breach: true, quantities: [{ quantity: '250', unit: 'g' }] });
  await page.context().close();
});

test("given another forager, Owen's entry cannot be corrected by them (404) and stays as it was", async () => {
  const hattie = await apiAs('hattie.brule@example.org');
  const before = (await ledger()).length;
  const answer = await hattie.post(`/api/harvest-entries/${entries.under}/corrections`, { data: { idempotencyKey: randomUUID(), reason: 'Not mine to correct', quantities: [{ quantity: '-10', unit: 'g' }] } });
  expect(answer.status()).toBe(404);
  expect((await ledger()).length).toBe(before);
  await hattie.dispose();
});

test('given the entry with a photo, Owen opens his original from the ledger; the landowner gets a copy without its EXIF; others get 404', async ({ browser }) => {
  const page = await pageAs(browser, 'forager@example.org');
  await openLedger(page);
  await page.locator(`tr[data-entry="${entries.weighed}"]`).getByTestId('entry-toggle').click();
  const figure = page.locator(`[data-details-for="${entries.weighed}"]`).getByTestId('entry-photo');
  const image = figure.getByRole('img');
  await expect(image).toHaveAttribute('src', `/api/photos/${photoId}`);
  await expect.poll(() => image.evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth)).toBe(24);
  await expect(figure.getByRole('link', { name: 'Open the photo' })).toHaveAttribute('href', `/api/photos/${photoId}`);

  const own = await owen.get(`/api/photos/${photoId}`);
  expect(own.status()).toBe(200);
  expect(Buffer.compare(await own.body(), original)).toBe(0);

  const exifr = (await import('exifr')).default;
  expect((await exifr.gps(original))?.latitude).toBeGreaterThan(43.8);
  const landowner = await walter.get(`/api/photos/${photoId}`);
  expect(landowner.status()).toBe(200);
  const copy = await landowner.body();
  expect(Buffer.compare(copy, original)).not.toBe(0);
  expect(await exifr.gps(copy)).toBeUndefined();

  // Hattie has no tie to the entry; Marisol is a steward, but the entry counts under Owen's own permit, not her club's.
  for (const email of ['hattie.brule@example.org', 'steward@example.org']) {
    const other = await apiAs(email);
    expect((await other.get(`/api/photos/${photoId}`)).status(), email).toBe(404);
    await other.dispose();
  }
  await page.context().close();
});

test("given Owen's entry with a photo, Walter opens it from his parcel's Tallies on a phone, told it is a copy without the location", async ({ browser }) => {
  const page = await pageAs(browser, 'landowner@example.org');
  await page.setViewportSize({ width: 390, height: 900 });
  await page.goto(`/land/${parcelId}/tallies`);
  const row = page.locator(`tr[data-row^="${parcelId}|${oysterId}|"]`);
  await row.getByRole('button', { name: 'Details' }).click();
  const details = page.locator(`[data-entries-for^="${parcelId}|${oysterId}|"]`);
  // Only the entry with the photo is marked; its photo is under the entries' table.
  await expect(details.locator('[data-flag="photo"]')).toHaveCount(1);
  const figure = details.getByTestId('entry-photo');
  await expect(figure).toHaveCount(1);
  await expect(figure).toHaveAttribute('data-copy', 'shared');
  await expect(figure).toContainText('a copy with the location and camera details removed');
  const image = figure.getByRole('img', { name: /^The forager’s photo of Oyster mushroom, 300 g on / });
  await expect(image).toHaveAttribute('src', `/api/photos/${photoId}`);
  await expect.poll(() => image.evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth)).toBe(24);
  // The bytes the browser got are Walter's: the copy, not Owen's original.
  const shown = await page.request.get(`/api/photos/${photoId}`);
  expect(Buffer.compare(await shown.body(), original)).not.toBe(0);
  expect(await page.evaluate(() => document.documentElement.scrollWidth <= window.innerWidth)).toBe(true);
  // Nor does the audit's frame scroll sideways with the entries open (1 px for rounding, as above).
  const frame = await page.locator('table:has(caption:text("Tallies for the season"))').evaluate((t) => ({ scrollWidth: (t.parentElement as HTMLElement).scrollWidth, clientWidth: (t.parentElement as HTMLElement).clientWidth }));
  expect(frame.scrollWidth).toBeLessThanOrEqual(frame.clientWidth + 1);
  await page.context().close();
});

for (const width of [390, 1280]) {
  test(`given a ${width} px wide window, My ledger fits it with an entry and its correction form open, and the quantity stays in view`, async ({ browser }) => {
    const context = await browser.newContext({ storageState: sessionFile('forager@example.org'), viewport: { width, height: 900 } });
    const page = await context.newPage();
    await openLedger(page);
    // Neither the page nor a table inside it scrolls sideways.
    // What sticks out, named by its widest cell, so a failure says where to look.
    const overflowing = () =>
      page.evaluate(() => [
        ...(document.documentElement.scrollWidth > window.innerWidth ? [`the page: ${document.documentElement.scrollWidth} px in ${window.innerWidth}`] : []),
        ...[...document.querySelectorAll('main .overflow-x-auto')]
          // scrollWidth and clientWidth are each rounded to whole pixels, so a table of fractional column widths can read 1 px over with nothing hidden.
          .filter((box) => box.scrollWidth > box.clientWidth + 1)
          .map((box) => {
            const widest = [...box.querySelectorAll('td, th')].sort((a, b) => b.scrollWidth - a.scrollWidth)[0];
            return `${box.getAttribute('data-testid') ?? box.className}: ${box.scrollWidth} px in ${box.clientWidth}; widest cell ${widest?.scrollWidth} px: ${widest?.textContent?.slice(0, 80)}`;
          }),
      ]);
    expect(await overflowing()).toEqual([]);
    const row = page.locator(`tr[data-entry="${entries.weighed}"]`);
    const quantity = await row.getByTestId('entry-quantity').boundingBox();
    expect(quantity && quantity.x + quantity.width).toBeLessThanOrEqual(width);
    const total = await oysterTotal(page).boundingBox();
    expect(total && total.x + total.width).toBeLessThanOrEqual(width);
    await page.screenshot({ path: test.info().outputPath(`ledger-${width}.png`), fullPage: true });

    await startCorrecting(page, entries.weighed);
    expect(await overflowing()).toEqual([]);
    await row.scrollIntoViewIfNeeded();
    await page.screenshot({ path: test.info().outputPath(`ledger-${width}-correcting.png`), fullPage: true });
    await context.close();
  });
}
