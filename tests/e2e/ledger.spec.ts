import { readFile } from 'node:fs/promises';
import { expect, test } from '@playwright/test';
import { pageAs } from './support';

/**
 * The forager's ledger. The seeded demo gives the demo forager no harvest entries (its entries are
 * the club members'); this spec inserts nothing. Entries appear when the field specs have recorded
 * some for the demo forager in the same run.
 */
const forager = 'forager@example.org';
/** The export's header row, written out here rather than taken from our own code. */
const csvHeader =
  'entry_id,counts_on,recorded_on,recorded_at,time_zone,parcel,species,scientific_name,method,quantity,unit,base_quantity,measure,' +
  'season_start,season_end,breach,corrects_entry_id,root_entry_id,correction_reason,corrected_later,recorded_by,photo,latitude,longitude';

/** The zone's abbreviation at an instant, from the IANA tz data (through Intl): EST or EDT in America/New_York. */
function zoneAbbreviation(instant: string, timeZone: string) {
  return new Intl.DateTimeFormat('en-US', { timeZone, timeZoneName: 'short' }).formatToParts(new Date(instant)).find((p) => p.type === 'timeZoneName')?.value ?? '';
}

test('given the demo forager, My ledger follows My permits in the navigation and opens on the empty state or the table', async ({ browser }) => {
  const page = await pageAs(browser, forager);
  await page.goto('/my-permits');
  const nav = page.getByRole('navigation', { name: 'Main' });
  const labels = (await nav.getByRole('link').allTextContents()).map((label) => label.trim());
  expect(labels.indexOf('My ledger')).toBe(labels.indexOf('My permits') + 1);
  await nav.getByRole('link', { name: 'My ledger' }).click();
  await expect(page).toHaveURL(/\/ledger$/);
  await expect(page.getByRole('heading', { level: 1 })).toHaveText('My ledger');
  await expect(page.getByTestId('ledger-empty').or(page.getByTestId('ledger-table'))).toBeVisible();
  await expect(page.getByRole('link', { name: 'Download CSV' })).toBeVisible();
});

test('given the demo forager has entries, a column heading sorts the table and aria-sort says which way', async ({ browser }) => {
  const page = await pageAs(browser, forager);
  await page.goto('/ledger');
  const empty = page.getByTestId('ledger-empty');
  await expect(empty.or(page.getByTestId('ledger-table'))).toBeVisible();
  test.skip(await empty.isVisible(), 'The demo forager has no harvest entries yet, so there is no table to sort.');

  await page.locator('[data-testid="ledger-table"][data-hydrated="true"]').waitFor();
  const quantity = page.getByRole('columnheader', { name: 'Quantity', exact: true });
  await expect(quantity).toHaveAttribute('aria-sort', 'none');
  await quantity.getByRole('button').click();
  await expect(quantity).toHaveAttribute('aria-sort', 'descending');
  await quantity.getByRole('button').click();
  await expect(quantity).toHaveAttribute('aria-sort', 'ascending');
  const countsOn = page.getByRole('columnheader', { name: 'Counts on', exact: true });
  await countsOn.getByRole('button').click();
  await expect(countsOn).toHaveAttribute('aria-sort', 'descending');
  await expect(quantity).toHaveAttribute('aria-sort', 'none');
  await expect(page.getByTestId('ledger-totals')).toBeVisible();
});

test('given the demo forager has entries, each recorded time reads on the parcel\'s clock with its zone abbreviation', async ({ browser }) => {
  const page = await pageAs(browser, forager);
  const { entries } = (await (await page.request.get('/api/ledger')).json()) as { entries: { id: string; recordedAt: string; timeZone: string }[] };
  test.skip(entries.length === 0, 'The demo forager has no harvest entries yet.');
  await page.goto('/ledger');
  await page.locator('[data-testid="ledger-table"][data-hydrated="true"]').waitFor();
  for (const entry of entries.slice(0, 5)) {
    // Every parcel of these specs keeps America/New_York time: EST in winter, EDT in summer (IANA tz data, REFERENCES §6).
    expect(entry.timeZone).toBe('America/New_York');
    const abbreviation = zoneAbbreviation(entry.recordedAt, 'America/New_York');
    expect(abbreviation).toMatch(/^E[SD]T$/);
    const recorded = page.locator(`tr[data-entry="${entry.id}"] time`);
    await expect(recorded).toHaveAttribute('datetime', entry.recordedAt);
    await expect(recorded).toHaveText(new RegExp(`\\d{1,2}:\\d{2}\\s?[AP]M ${abbreviation}$`));
  }
});

test('given the demo forager, Download CSV saves tallywood-ledger-<date>.csv that starts with the header row', async ({ browser }) => {
  const page = await pageAs(browser, forager);
  await page.goto('/ledger');
  const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Download CSV' }).click()]);
  expect(download.suggestedFilename()).toMatch(/^tallywood-ledger-\d{4}-\d{2}-\d{2}\.csv$/);
  const text = await readFile(await download.path(), 'utf8');
  // RFC 4180 §2 rules 1 and 3: a header line ending in CRLF.
  expect(text.startsWith(`${csvHeader}\r\n`)).toBe(true);

  const response = await page.request.get('/api/ledger/export.csv');
  expect(response.status()).toBe(200);
  expect(response.headers()['content-type']).toContain('text/csv');
  expect(response.headers()['content-disposition']).toMatch(/^attachment; filename="tallywood-ledger-\d{4}-\d{2}-\d{2}\.csv"$/);
});

test('given the JSON ledger, it answers the signed-in forager and refuses a signed-out visitor and a malformed filter', async ({ browser }) => {
  const page = await pageAs(browser, forager);
  const mine = await page.request.get('/api/ledger');
  expect(mine.status()).toBe(200);
  const body = (await mine.json()) as { entries: unknown[]; totals: unknown[] };
  expect(Array.isArray(body.entries) && Array.isArray(body.totals)).toBe(true);

  const bad = await page.request.get('/api/ledger?from=2026-13-40');
  expect(bad.status()).toBe(400);
  expect(((await bad.json()) as { error: { field?: string } }).error.field).toBe('from');

  const stranger = await browser.newPage();
  const signedOut = await stranger.request.get('/api/ledger');
  expect(signedOut.status()).toBe(401);
  await stranger.goto('/ledger');
  await expect(stranger).toHaveURL(/\/sign-in\?next=%2Fledger$/);
});
