import { expect, test } from '@playwright/test';
import { mailFor, signIn, submitSignInForm } from './support';

/** One demo account per role (data/demo/people.csv) and the navigation each should see. */
const accounts = [
  { email: 'forager@example.org', role: 'forager', sees: ['My permits', 'Catalogue', 'Club'], not: ['Land', 'Accounts'] },
  { email: 'landowner@example.org', role: 'landowner', sees: ['Land', 'Catalogue'], not: ['Accounts', 'Club'] },
  { email: 'steward@example.org', role: 'steward', sees: ['Club', 'My permits'], not: ['Land', 'Accounts'] },
  { email: 'admin@example.org', role: 'admin', sees: ['Accounts', 'Catalogue'], not: ['Land', 'Club'] },
];

for (const account of accounts) {
  test(`given the ${account.role} demo account, it signs in by e-mailed link, sees its navigation, and signs out`, async ({ page }) => {
    await signIn(page, account.email);
    await expect(page.getByRole('heading', { level: 1 })).toContainText('Welcome');
    await expect(page.getByTestId('roles')).toContainText(account.role);
    const nav = page.getByRole('navigation', { name: 'Main' });
    for (const label of account.sees) await expect(nav.getByRole('link', { name: label })).toBeVisible();
    for (const label of account.not) await expect(nav.getByRole('link', { name: label })).toHaveCount(0);

    const cookies = await page.context().cookies();
    const session = cookies.find((c) => c.name.endsWith('authjs.session-token'));
    expect(session?.httpOnly).toBe(true);
    expect(session?.sameSite).toBe('Lax');

    await page.getByRole('button', { name: 'Sign out' }).click();
    await expect(page.getByRole('status')).toHaveText('You are signed out.');
    await expect(page.getByRole('banner').getByRole('link', { name: 'Sign in' })).toBeVisible();
    expect((await page.request.get('/api/me')).status()).toBe(401);
  });
}

test('given a malformed address, it says what is wrong beside the field and sends nothing', async ({ page }) => {
  await submitSignInForm(page, 'owen.marsh@');
  await expect(page.getByRole('alert')).toContainText('does not look like an e-mail address');
  await expect(page).toHaveURL(/\/sign-in$/);
});

test('given an address with no account, it says so and offers to create one', async ({ page }) => {
  await submitSignInForm(page, 'nobody-here@example.org');
  await expect(page.getByRole('alert')).toContainText('No account uses this address');
  await expect(page.getByRole('link', { name: 'Create an account' }).first()).toBeVisible();
});

test('given a sign-in link already used, it explains that links work once', async ({ page }) => {
  const email = 'hattie.brule@example.org';
  await signIn(page, email);
  const [mail] = await mailFor(page.request, email);
  const link = mail?.text.match(/https?:\/\/\S+\/api\/auth\/callback\/\S+/)?.[0] ?? '';
  expect(link).not.toBe('');
  await page.context().clearCookies();
  await page.goto(link);
  await expect(page.getByRole('heading', { name: 'We could not sign you in' })).toBeVisible();
  await expect(page.getByText('expired or has already been used')).toBeVisible();
});
