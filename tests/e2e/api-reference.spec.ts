import { expect, test } from '@playwright/test';

/**
 * The API reference (/api-reference) is public, reachable from every page's footer, lists every
 * operation of /api/openapi.json with its body fields, and fits the window on a phone (390 px wide)
 * and a laptop (1280 px). The check-in body is the one src/lib/field.schemas.ts (checkInSchema)
 * defines: longitude, latitude and accuracyM required, source optional.
 */

test('given no session, the footer leads to the API reference, which lists POST /api/check-ins with its body fields', async ({ page }) => {
  await page.goto('/');
  await page.getByRole('contentinfo').getByRole('link', { name: 'API reference' }).click();
  await expect(page).toHaveURL(/\/api-reference$/);
  await expect(page.getByRole('heading', { level: 1, name: 'API reference' })).toBeVisible();

  const checkIn = page.locator('[data-testid="api-operation"][data-method="POST"][data-path="/api/check-ins"]');
  await expect(checkIn).toHaveCount(1);
  await expect(checkIn).toContainText('Who may call it: Foragers');
  const field = (name: string) => checkIn.locator(`[data-testid="api-field"][data-name="${name}"]`);
  for (const name of ['longitude', 'latitude', 'accuracyM']) await expect(field(name)).toContainText('required');
  await expect(field('source')).toContainText('optional');
  await expect(checkIn).toContainText('400');
});

test('given the OpenAPI document, the reference shows each of its operations once', async ({ page, request }) => {
  const doc = (await (await request.get('/api/openapi.json')).json()) as { paths: Record<string, Record<string, unknown>> };
  const documented = Object.entries(doc.paths).flatMap(([path, methods]) => Object.keys(methods).map((method) => `${method.toUpperCase()} ${path}`));
  expect(documented.length).toBeGreaterThan(60);
  await page.goto('/api-reference');
  const shown = await page.getByTestId('api-operation').evaluateAll((articles) => articles.map((a) => `${a.getAttribute('data-method')} ${a.getAttribute('data-path')}`));
  expect(shown.sort()).toEqual(documented.sort());
});

for (const width of [390, 1280]) {
  test(`given a window ${width} px wide, the API reference is no wider than the window`, async ({ page }) => {
    await page.setViewportSize({ width, height: 900 });
    await page.goto('/api-reference');
    await expect(page.getByTestId('api-operation').first()).toBeVisible();
    const { scrollWidth, innerWidth } = await page.evaluate(() => ({ scrollWidth: document.documentElement.scrollWidth, innerWidth: window.innerWidth }));
    expect(scrollWidth).toBeLessThanOrEqual(innerWidth);
  });
}
