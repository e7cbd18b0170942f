import { expect, test } from '@playwright/test';
import { apiAs, pageAs } from './support';

/**
 * The club page and a season report fit the window, on a phone (390 px wide) and a laptop (1280 px):
 * nothing is wider than the viewport, so nothing needs sideways scrolling to be read. The report is
 * Walter's Cobble Ridge Lot, with the demo's entries (data/demo/scenario.json); the club page is
 * Marisol Kent's, with the audit's chart and table.
 */
const widths = [390, 1280];

let cobbleRidge = '';
test.beforeAll(async () => {
  const walter = await apiAs('landowner@example.org');
  const { parcels } = (await (await walter.get('/api/parcels')).json()) as { parcels: { id: string; name: string }[] };
  cobbleRidge = parcels.find((p) => p.name === 'Cobble Ridge Lot')?.id ?? '';
  expect(cobbleRidge).not.toBe('');
  await walter.dispose();
});

async function overflow(page: import('@playwright/test').Page) {
  return page.evaluate(() => ({ scrollWidth: document.documentElement.scrollWidth, innerWidth: window.innerWidth }));
}

for (const width of widths) {
  test(`given a window ${width} px wide, the season report is no wider than the window`, async ({ browser }) => {
    const page = await pageAs(browser, 'landowner@example.org');
    await page.setViewportSize({ width, height: 900 });
    await page.goto(`/reports/season/${cobbleRidge}`);
    await expect(page.getByTestId('season-report')).toBeVisible();
    const { scrollWidth, innerWidth } = await overflow(page);
    expect(scrollWidth).toBeLessThanOrEqual(innerWidth);
    await page.context().close();
  });

  test(`given a window ${width} px wide, the club page with its audit is no wider than the window`, async ({ browser }) => {
    const page = await pageAs(browser, 'steward@example.org');
    await page.setViewportSize({ width, height: 900 });
    await page.goto('/club');
    await page.locator('[data-testid="flags-panel"][data-hydrated="true"]').first().waitFor();
    await expect(page.locator('[data-status="loading"]')).toHaveCount(0);
    const { scrollWidth, innerWidth } = await overflow(page);
    expect(scrollWidth).toBeLessThanOrEqual(innerWidth);
    // Nor does the audit's table need scrolling sideways inside its frame to reach a column.
    const table = page.locator('table:has(caption:text("Tallies for the season"))');
    await expect(table).toBeVisible();
    const frame = await table.evaluate((t) => ({ scrollWidth: (t.parentElement as HTMLElement).scrollWidth, clientWidth: (t.parentElement as HTMLElement).clientWidth }));
    expect(frame.scrollWidth).toBeLessThanOrEqual(frame.clientWidth);
    await page.context().close();
  });
}
