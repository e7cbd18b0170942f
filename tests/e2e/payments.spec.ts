import { randomBytes, randomUUID } from 'node:crypto';
import { expect, test, type APIRequestContext } from '@playwright/test';
import Stripe from 'stripe';
import { apiAs, baseURL, mailFor, pageAs } from './support';

/**
 * Paying a permit's fee through the local payments fake (started by scripts/test.mjs). The demo has
 * one approved permit with an unpaid fee: Hattie Brule's at Pelletier Hill Farm, $15.00, terms accepted,
 * first day 2026-11-20 (data/demo/scenario.json), so paying makes it active on the demo's today.
 */
const hattie = 'hattie.brule@example.org';
const fakeUrl = `http://127.0.0.1:${process.env.PAYMENTS_FAKE_PORT ?? 2610}`;
/** The fake's test hooks answer only with the token npm test shares with it (scripts/lib/local-fake.mjs). */
const localToken = { headers: { 'x-local-token': process.env.LOCAL_FAKES_TOKEN ?? '' } };
const webhookSecret = process.env.STRIPE_WEBHOOK_SECRET ?? 'whsec_tallywood_test';
/** Only its webhook helpers are used: the SDK signs test payloads the way the provider does. */
const sdk = new Stripe('sk_test_unused');

type Fee = { permitId: string; parcelName: string; state: string; feeMinor: number; currency: string };
type FakeEvent = { id: string; type: string; data: { object: { id: string } } };

test.describe.configure({ mode: 'serial' });

let api: APIRequestContext;
let permitId = '';
let checkoutUrl = '';
const sessionId = () => checkoutUrl.split('/').pop() ?? '';

test.beforeAll(async () => {
  api = await apiAs(hattie);
});

test.afterAll(async () => {
  await api?.dispose();
});

const postWebhook = (body: string, signature?: string) =>
  api.post('/api/payments/webhook', { data: body, headers: { 'content-type': 'application/json', ...(signature ? { 'stripe-signature': signature } : {}) } });

async function receiptsFor(request: APIRequestContext) {
  return (await mailFor(request, hattie)).filter((m) => m.subject.startsWith('Receipt:'));
}

/** Walter Pelletier owns Pelletier Hill Farm (data/demo/scenario.json). */
const walter = 'landowner@example.org';
async function feeNoticesFor(request: APIRequestContext) {
  return (await mailFor(request, walter)).filter((m) => m.subject.startsWith('Fee paid:') && m.subject.includes('Hattie Brule'));
}

test('given a forager with an approved permit and an unpaid fee, it lists the fee as due and opens a checkout', async () => {
  const { fees } = (await (await api.get('/api/payments/due')).json()) as { fees: Fee[] };
  const fee = fees.find((f) => f.parcelName === 'Pelletier Hill Farm');
  expect(fee).toMatchObject({ state: 'approved', feeMinor: 1500, currency: 'usd' });
  permitId = fee?.permitId ?? '';

  const response = await api.post(`/api/permits/${permitId}/checkout`);
  expect(response.status(), await response.text()).toBe(200);
  checkoutUrl = ((await response.json()) as { url: string }).url;
  expect(checkoutUrl).toMatch(new RegExp(`^${fakeUrl}/checkout/cs_test_`));
});

test('given someone who neither holds nor stewards the permit, checkout answers 404', async () => {
  const beth = await apiAs('beth.lindqvist@example.org');
  expect((await beth.post(`/api/permits/${permitId}/checkout`)).status()).toBe(404);
  await beth.dispose();
});

test('given a webhook with a bad or missing signature, it answers 400 and nothing changes', async () => {
  const forged = JSON.stringify({
    id: `evt_test_forged_${randomBytes(6).toString('hex')}`, object: 'event', type: 'checkout.session.completed',
    data: { object: { id: sessionId(), object: 'checkout.session', status: 'complete', payment_status: 'paid', payment_intent: 'pi_test_forged', metadata: { permitId } } },
  });
  const wrongSecret = sdk.webhooks.generateTestHeaderString({ payload: forged, secret: 'whsec_not_ours' });
  for (const signature of [wrongSecret, undefined]) {
    const response = await postWebhook(forged, signature);
    expect(response.status()).toBe(400);
    expect(((await response.json()) as { error: { code: string } }).error.code).toBe('bad-signature');
  }
  const { fees } = (await (await api.get('/api/payments/due')).json()) as { fees: Fee[] };
  expect(fees.map((f) => f.permitId)).toContain(permitId);
  expect(await (await api.get(`/payments/done?session_id=${sessionId()}`)).text()).toContain('Confirming…');
});

test('given a correctly signed completion of this checkout for another amount, currency or payment row, nothing is settled', async () => {
  const provider = new Stripe(process.env.STRIPE_SECRET_KEY ?? 'sk_test_tallywood_test', { host: '127.0.0.1', port: Number(new URL(fakeUrl).port), protocol: 'http', maxNetworkRetries: 0 });
  const session = await provider.checkout.sessions.retrieve(sessionId());
  expect(session.metadata?.paymentId).toBeTruthy();
  const paid = { ...session, status: 'complete', payment_status: 'paid', payment_intent: 'pi_test_forged' };
  for (const changed of [{ amount_total: 1 }, { currency: 'eur' }, { metadata: { permitId, paymentId: randomUUID() } }]) {
    const body = JSON.stringify({ id: `evt_test_${randomBytes(6).toString('hex')}`, object: 'event', type: 'checkout.session.completed', data: { object: { ...paid, ...changed } } });
    const response = await postWebhook(body, sdk.webhooks.generateTestHeaderString({ payload: body, secret: webhookSecret }));
    expect(response.status(), JSON.stringify(changed)).toBe(200);
  }
  const { fees } = (await (await api.get('/api/payments/due')).json()) as { fees: Fee[] };
  expect(fees.map((f) => f.permitId)).toContain(permitId);
  expect(await receiptsFor(api)).toHaveLength(0);
});

test('given the checkout in Chromium, Pay lands on the done page with the permit active and a receipt mailed', async ({ browser }) => {
  const page = await pageAs(browser, hattie);
  const response = await page.request.post(`/api/permits/${permitId}/checkout`, { headers: { origin: baseURL } });
  expect(response.status()).toBe(200);
  // The payer's open checkout is reused rather than a second one made.
  expect(((await response.json()) as { url: string }).url).toBe(checkoutUrl);

  await page.goto(checkoutUrl);
  await expect(page.getByText('Local test checkout — no real money moves')).toBeVisible();
  await expect(page.getByTestId('amount')).toHaveText('$15.00');
  await page.getByRole('button', { name: 'Pay', exact: true }).click();

  await expect(page).toHaveURL(new RegExp(`/payments/done\\?session_id=${sessionId()}$`));
  await expect(page.getByRole('heading', { name: 'Payment received' })).toBeVisible();
  const paid = page.getByTestId('paid-permit');
  await expect(paid).toContainText('Pelletier Hill Farm');
  await expect(paid.locator('[data-state]')).toHaveAttribute('data-state', 'active');

  await expect.poll(async () => (await receiptsFor(page.request)).length, { message: 'a receipt e-mail for Hattie' }).toBe(1);
  const [receipt] = await receiptsFor(page.request);
  expect(receipt?.text).toContain('$15.00');
  expect(receipt?.text).toContain('/my-permits');

  // The landowner is told the fee came in: who paid, how much, for which parcel.
  await expect.poll(async () => (await feeNoticesFor(page.request)).length, { message: "a fee-paid e-mail for the parcel's landowner" }).toBe(1);
  const [notice] = await feeNoticesFor(page.request);
  expect(notice?.subject).toBe('Fee paid: $15.00 from Hattie Brule for Pelletier Hill Farm');
  expect(notice?.text).toContain('Hattie Brule paid the $15.00 fee for their access permit at Pelletier Hill Farm');
  expect(notice?.text).toContain('The permit is now active.');
  const { fees } = (await (await page.request.get('/api/payments/due')).json()) as { fees: Fee[] };
  expect(fees.map((f) => f.permitId)).not.toContain(permitId);
});

test('given a replayed event, the second delivery answers duplicate and nothing happens twice', async () => {
  const { events } = (await (await api.get(`${fakeUrl}/__events`, localToken)).json()) as { events: FakeEvent[] };
  const completed = events.find((e) => e.type === 'checkout.session.completed' && e.data.object.id === sessionId());
  expect(completed).toBeDefined();
  const resent = await (await api.post(`${fakeUrl}/__events/${completed?.id}/resend`, localToken)).json();
  expect(resent).toEqual({ status: 200, body: { received: true, duplicate: true } });

  const body = JSON.stringify({ id: `evt_test_e2e_${randomBytes(6).toString('hex')}`, object: 'event', type: 'customer.created', data: { object: { id: 'cus_test_e2e' } } });
  const signature = sdk.webhooks.generateTestHeaderString({ payload: body, secret: webhookSecret });
  expect(await (await postWebhook(body, signature)).json()).toEqual({ received: true });
  expect(await (await postWebhook(body, signature)).json()).toEqual({ received: true, duplicate: true });

  expect(await receiptsFor(api)).toHaveLength(1);
  expect(await feeNoticesFor(api)).toHaveLength(1);
  const done = await (await api.get(`/payments/done?session_id=${sessionId()}`)).text();
  expect(done).toContain('Payment received');
  expect(done).toContain('data-state="active"');
});
