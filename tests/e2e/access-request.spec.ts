import { expect, test } from '@playwright/test';
import { mailFor, newestMailId, pageAs, signInLinkFor } from './support';

/**
 * The forager's half: ask for access, the landowner approves from the e-mailed link (setting a
 * fee), the forager accepts the terms, pays on the local checkout, and the permit is active.
 */
test('given a request for Pelletier Hill Farm, approval by e-mailed link, accepted terms and a paid fee, the permit is active', async ({ browser }) => {
  const forager = await pageAs(browser, 'forager@example.org');
  await forager.goto('/my-permits');
  const card = forager.getByTestId('open-parcels').locator('[data-parcel="Pelletier Hill Farm"]');
  await card.getByText('Ask for access').click();
  await card.getByLabel(/What you would like to harvest/).fill('Blackberries in August and a few black walnuts in October.');
  await card.getByRole('button', { name: 'Send request' }).click();
  const mine = forager.getByTestId('my-permits').locator('li').filter({ hasText: 'Pelletier Hill Farm' });
  await expect(mine.locator('[data-state="requested"]')).toBeVisible();

  // The landowner's e-mail links to the request.
  let link = '';
  await expect
    .poll(async () => {
      const mail = (await mailFor(forager.request, 'landowner@example.org')).find((m) => m.subject === 'Access request for Pelletier Hill Farm');
      link = mail?.text.match(/https?:\/\/\S+\/requests\/[0-9a-f-]{36}/)?.[0] ?? '';
      return link;
    })
    .not.toBe('');
  const owner = await browser.newPage();
  await owner.goto(link);
  await expect(owner).toHaveURL(/\/sign-in\?next=/);
  const after = await newestMailId(owner.request, 'landowner@example.org');
  await owner.locator('form[data-hydrated]').waitFor();
  await owner.getByLabel('E-mail address').fill('landowner@example.org');
  await owner.getByRole('button', { name: 'E-mail me a sign-in link' }).click();
  await expect(owner.getByRole('heading', { name: 'Check your e-mail' })).toBeVisible();
  await owner.goto(await signInLinkFor(owner.request, 'landowner@example.org', after));
  await expect(owner).toHaveURL(link);
  const decision = owner.getByTestId('decision');
  await decision.getByLabel('Fee in dollars').fill('15');
  await decision.getByLabel('Message to the requester').fill('Welcome. Please keep to the hedgerows.');
  await decision.getByRole('button', { name: 'Send decision' }).click();
  await expect(owner.getByRole('heading', { level: 1 })).toHaveText('Pelletier Hill Farm');

  await expect.poll(async () => (await mailFor(forager.request, 'forager@example.org')).some((m) => m.subject === 'Your request for Pelletier Hill Farm is approved')).toBe(true);

  // Terms, then the fee.
  await forager.reload();
  await expect(mine.getByTestId('missing')).toContainText("accept the parcel's current terms");
  await mine.getByRole('button', { name: /I accept version 1 of the terms/ }).click();
  await expect(mine.getByTestId('missing')).not.toContainText('accept the parcel');
  await mine.getByRole('button', { name: 'Pay $15.00' }).click();
  await expect(forager.getByText('no real money moves')).toBeVisible();
  await forager.getByRole('button', { name: 'Pay' }).click();
  await expect(forager).toHaveURL(/\/payments\/done/);
  await forager.goto('/my-permits');
  await expect(mine.locator('[data-state="active"]')).toBeVisible();
  await expect.poll(async () => (await mailFor(forager.request, 'forager@example.org')).some((m) => /receipt/i.test(m.subject))).toBe(true);
});
