import { join } from 'node:path';
import { expect, request as playwrightRequest, type APIRequestContext, type Browser, type Page } from '@playwright/test';

/** A caught mail; attachments carry their bytes in base64 (scripts/mail-catcher.ts). */
type Caught = { id: string; to: string[]; subject: string; text: string; attachments?: { filename: string; contentType: string; contentBase64: string }[] };

/** The messages the local mail catcher holds for one address, newest first (through the app's mailbox API). */
export async function mailFor(request: APIRequestContext, email: string): Promise<Caught[]> {
  const response = await request.get(`/api/mailbox?to=${encodeURIComponent(email)}`);
  expect(response.ok()).toBeTruthy();
  return ((await response.json()) as { messages: Caught[] }).messages;
}

/** Waits for a sign-in mail newer than `after` and returns the link in it. */
export async function signInLinkFor(request: APIRequestContext, email: string, after: number): Promise<string> {
  let link = '';
  await expect
    .poll(async () => {
      const messages = await mailFor(request, email);
      const fresh = messages.find((m) => Number(m.id) > after && m.subject.includes('sign-in link'));
      link = fresh?.text.match(/https?:\/\/\S+\/api\/auth\/callback\/\S+/)?.[0] ?? '';
      return link;
    }, { message: `a sign-in e-mail for ${email}` })
    .not.toBe('');
  return link;
}

export async function newestMailId(request: APIRequestContext, email: string) {
  const [newest] = await mailFor(request, email);
  return newest ? Number(newest.id) : 0;
}

/** Fills in and sends the sign-in form, once its island is live. */
export async function submitSignInForm(page: Page, email: string) {
  await page.goto('/sign-in');
  await page.locator('form[data-hydrated]').waitFor();
  await page.getByLabel('E-mail address').fill(email);
  await page.getByRole('button', { name: 'E-mail me a sign-in link' }).click();
}

/** Signs in through the real flow: the form, the e-mailed link from the local catcher, the callback. */
export async function signIn(page: Page, email: string) {
  const after = await newestMailId(page.request, email);
  await submitSignInForm(page, email);
  await expect(page.getByRole('heading', { name: 'Check your e-mail' })).toBeVisible();
  const link = await signInLinkFor(page.request, email, after);
  await page.goto(link);
  await expect(page.getByTestId('signed-in-as')).toBeVisible();
}

/** An API client signed in as `email`, through the same e-mailed link (its cookies hold the session). */
export async function signInApi(request: APIRequestContext, email: string) {
  const after = await newestMailId(request, email);
  const response = await request.post('/api/sign-in', { data: { email } });
  expect(response.status(), await response.text()).toBe(202);
  const link = await signInLinkFor(request, email, after);
  const landed = await request.get(link);
  expect(landed.ok()).toBeTruthy();
  const me = await request.get('/api/me');
  expect(me.status()).toBe(200);
  return request;
}

/** The app under test and the sessions the setup project made once per run (auth.setup.ts). */
export const baseURL = `http://127.0.0.1:${process.env.TEST_APP_PORT ?? 4331}`;
export const sessionFile = (email: string) => join(import.meta.dirname, '..', '..', '.local', 'test-auth', `${email}.json`);

/** An API client already signed in as `email`. It sends an Origin header as browsers do. */
export function apiAs(email: string) {
  return playwrightRequest.newContext({ baseURL, storageState: sessionFile(email), extraHTTPHeaders: { origin: baseURL } });
}

/** A browser page already signed in as `email`. */
export async function pageAs(browser: Browser, email: string) {
  const context = await browser.newContext({ storageState: sessionFile(email) });
  return context.newPage();
}
