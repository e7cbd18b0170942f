import { expect, test } from '@playwright/test';
import { apiAs, pageAs } from './support';

/**
 * The reminder switches (issue 14). The demo forager finds Settings in the navigation, turns the
 * season reminder off, and it stays off after a reload; the spec turns it back on at the end, so the
 * demo is as it was. The API refuses a body that is not a switch with a 400 naming the field.
 */
const forager = 'forager@example.org';

test('given the demo forager, a reminder turned off on Settings stays off after a reload', async ({ browser }) => {
  const page = await pageAs(browser, forager);
  await page.goto('/my-permits');
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Settings' }).click();
  await expect(page).toHaveURL(/\/settings$/);
  await expect(page.getByRole('heading', { name: 'Reminders' })).toBeVisible();
  await page.locator('form[data-hydrated]').waitFor();

  const season = page.getByRole('checkbox', { name: 'A season opens tomorrow' });
  await expect(season).toBeChecked();
  await season.uncheck();
  await page.getByRole('button', { name: 'Save reminders' }).click();
  await expect(page.getByTestId('reminders-saved')).toHaveText(/Saved/);

  await page.reload();
  await page.locator('form[data-hydrated]').waitFor();
  await expect(page.getByRole('checkbox', { name: 'A season opens tomorrow' })).not.toBeChecked();
  await expect(page.getByRole('checkbox', { name: 'A permit ends in 14 days' })).toBeChecked();
  await expect(page.getByRole('checkbox', { name: 'A closure starts tomorrow' })).toBeChecked();

  await page.getByRole('checkbox', { name: 'A season opens tomorrow' }).check();
  await page.getByRole('button', { name: 'Save reminders' }).click();
  await expect(page.getByTestId('reminders-saved')).toBeVisible();
  await page.context().close();
});

test('given a body that is not a switch, PUT /api/me/reminders answers 400 naming the field, and changes nothing', async () => {
  const api = await apiAs(forager);
  const before = await (await api.get('/api/me/reminders')).json();
  const refused = await api.put('/api/me/reminders', { data: { permitEnding: 'no', seasonOpening: true, closureStarting: true, weeklyDigest: true } });
  expect(refused.status()).toBe(400);
  expect((await refused.json()).error).toMatchObject({ code: 'invalid-input', field: 'permitEnding' });
  expect(await (await api.get('/api/me/reminders')).json()).toEqual(before);
  await api.dispose();
});
