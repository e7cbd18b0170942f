import { expect, test } from '@playwright/test';
import { baseURL, mailFor, signIn, signInLinkFor } from './support';

test('given a new person who manages land, it makes an unverified landowner whom an admin then verifies', async ({ browser }) => {
  const email = `new.landowner.${Date.now()}@example.org`;
  const person = await browser.newPage();
  await person.goto('/sign-up');
  await person.locator('form[data-hydrated]').waitFor();
  await person.getByLabel('Your name').fill('Rosa Quenneville');
  await person.getByLabel('E-mail address').fill(email.toUpperCase());
  await person.getByText('I own or manage land').click();
  await person.getByLabel('The land you own or manage').fill('Quenneville Ledges, 25 acres up Cobble Ridge');
  await person.getByLabel('A note for the admin').fill('The town clerk can confirm it.');
  await person.getByRole('button', { name: /Create account/ }).click();
  await expect(person.getByText('Your account is ready.')).toBeVisible();

  await person.goto(await signInLinkFor(person.request, email, 0));
  await expect(person.getByTestId('roles')).toHaveText('Signed in as forager, landowner.');
  await expect(person.getByText('waiting for an admin to verify it')).toBeVisible();
  await person.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Land' }).click();
  await expect(person.getByTestId('unverified')).toBeVisible();

  const admin = await browser.newPage();
  await signIn(admin, 'admin@example.org');
  await admin.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Accounts' }).click();
  const row = admin.getByRole('row').filter({ hasText: email });
  await row.getByRole('link', { name: /Review/ }).click();
  await expect(admin.getByTestId('landowner-claim')).toContainText('Quenneville Ledges, 25 acres up Cobble Ridge');
  await expect(admin.getByTestId('landowner-claim')).toContainText('The town clerk can confirm it.');
  await admin.locator('form[data-hydrated]').waitFor();
  await admin.getByRole('button', { name: 'Verify…' }).click();
  await admin.getByRole('alertdialog').getByRole('button', { name: 'Yes, verify and e-mail them' }).click();
  await expect(admin.getByRole('status')).toHaveText('Landowner verified; they have been e-mailed.');
  await expect(admin.getByRole('row').filter({ hasText: email })).toContainText('verified');

  await person.reload();
  await expect(person.getByTestId('unverified')).toHaveCount(0);
});

test('given an address that already has an account, sign-up points to sign-in', async ({ page }) => {
  await page.goto('/sign-up');
  await page.locator('form[data-hydrated]').waitFor();
  await page.getByLabel('Your name').fill('Owen Again');
  await page.getByLabel('E-mail address').fill('forager@example.org');
  await page.getByRole('button', { name: /Create account/ }).click();
  await expect(page.getByRole('alert')).toContainText('An account already uses this address');
});

test('given an empty name, it asks for one beside the field', async ({ page }) => {
  await page.goto('/sign-up');
  await page.locator('form[data-hydrated]').waitFor();
  await page.getByLabel('E-mail address').fill('someone@example.org');
  await page.getByRole('button', { name: /Create account/ }).click();
  await expect(page.getByRole('alert')).toHaveText('Enter your name.');
});

test('given more sign-in requests for one address than the hourly limit, it refuses with a 429 and a reason', async ({ request }) => {
  const email = 'sam.okafor@example.org';
  const before = (await mailFor(request, email)).length;
  const statuses: number[] = [];
  for (let i = 0; i < 6; i += 1) statuses.push((await request.post('/api/sign-in', { data: { email } })).status());
  // The default limit is 5 an hour per address (SIGN_IN_LIMIT_PER_HOUR).
  expect(statuses).toEqual([202, 202, 202, 202, 202, 429]);
  const refused = await request.post('/api/sign-in', { data: { email } });
  expect((await refused.json()).error.message).toContain('in the last hour');
  await expect.poll(async () => (await mailFor(request, email)).length).toBe(before + 5);
});

test('given 20 sign-in requests for one address at the same moment, exactly the hourly limit of links is sent', async ({ request }) => {
  // Counted by one atomic upsert per request (rate-limiter-flexible's Drizzle store): none can slip between a count and a send.
  const email = 'irene.duval@example.org';
  const before = (await mailFor(request, email)).length;
  const answers = await Promise.all(Array.from({ length: 20 }, () => request.post('/api/sign-in', { data: { email } })));
  const statuses = answers.map((a) => a.status());
  expect(statuses.filter((s) => s === 202)).toHaveLength(5);
  expect(statuses.filter((s) => s === 429)).toHaveLength(15);
  await expect.poll(async () => (await mailFor(request, email)).length).toBe(before + 5);
});

test('given a doubled slash, an encoded slash or a dot segment, the Auth.js sign-in action is not reachable around /api/sign-in', async ({ request }) => {
  const email = 'dale.hosmer@example.org';
  const before = (await mailFor(request, email)).length;
  const csrf = await request.get('/api/auth/csrf');
  expect(csrf.status()).toBe(404);
  for (const path of ['/api/auth//signin/nodemailer', '/api/auth/signin/nodemailer', '/api/auth/signin//nodemailer', '/api/auth/%73ignin/nodemailer', '/api/auth/x/../signin/nodemailer', '/api/auth/session', '/api/auth/signout']) {
    const response = await request.post(path, { form: { email, csrfToken: 'anything', callbackUrl: '/' }, headers: { origin: baseURL, 'x-tallywood-client-address': '203.0.113.9' } });
    expect(response.status(), path).toBe(404);
  }
  expect((await mailFor(request, email)).length).toBe(before);
});
