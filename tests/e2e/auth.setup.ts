import { test as setup } from '@playwright/test';
import { baseURL, sessionFile, signInApi } from './support';

/**
 * Signs each account the specs use in once per run, through the real e-mailed link, and keeps the
 * session for them (sign-in mail is limited per address per hour, as it is for people).
 */
const accounts = ['landowner@example.org', 'june.farrand@example.org', 'forager@example.org', 'hattie.brule@example.org', 'beth.lindqvist@example.org', 'steward@example.org', 'admin@example.org'];

for (const email of accounts) {
  setup(`sign in ${email}`, async ({ playwright }) => {
    const context = await playwright.request.newContext({ baseURL });
    await signInApi(context, email);
    await context.storageState({ path: sessionFile(email) });
    await context.dispose();
  });
}
