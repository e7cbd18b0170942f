import type { ChildProcess } from 'node:child_process';
import { mkdtemp, rm } from 'node:fs/promises';
import { createServer, request, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Stripe from 'stripe';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { startPaymentsFake, stopPaymentsFake } from './payments-fake';

/**
 * The local payments fake, through the official `stripe` SDK: the SDK is the reference for what the
 * provider accepts and answers, and its webhook helpers are the reference for the signature scheme
 * (https://docs.stripe.com/webhooks/signature: HMAC-SHA256 of "<t>.<body>", header `t=…,v1=…`).
 */
const secretKey = 'sk_test_fake_integration';
const webhookSecret = 'whsec_fake_integration';

type Delivery = { body: string; signature: string };
let deliveries: Delivery[] = [];
/** How many of the next deliveries the stand-in app refuses with a 500. */
let refuseNext = 0;
let receiver: Server;
let store: string;
let port: number;
let fake: ChildProcess | undefined;
let stripe: Stripe;
let baseUrl: string;
/** The fake's test hooks answer only with the local token (scripts/lib/local-fake.mjs). */
const localToken = 'payments-test-local-token';
const withToken = { headers: { 'x-local-token': localToken } };

async function listen(server: Server, onPort = 0) {
  await new Promise<void>((resolve) => server.listen(onPort, '127.0.0.1', resolve));
  return (server.address() as AddressInfo).port;
}

const startFake = (webhookPort: number) =>
  startPaymentsFake({ port, store, webhookUrl: `http://127.0.0.1:${webhookPort}/hook`, localToken, secretKey, webhookSecret });
const stopFake = () => stopPaymentsFake(fake);

beforeAll(async () => {
  store = await mkdtemp(join(tmpdir(), 'tallywood-payments-'));
  receiver = createServer((req, res) => {
    let body = '';
    req.on('data', (chunk) => (body += chunk));
    req.on('end', () => {
      deliveries.push({ body, signature: String(req.headers['stripe-signature'] ?? '') });
      if (refuseNext > 0) {
        refuseNext -= 1;
        res.writeHead(500).end();
      } else res.writeHead(200, { 'content-type': 'application/json' }).end('{"received":true}');
    });
  });
  const webhookPort = await listen(receiver);
  const probe = createServer();
  port = await listen(probe);
  await new Promise((resolve) => probe.close(resolve));
  fake = await startFake(webhookPort);
  baseUrl = `http://127.0.0.1:${port}`;
  stripe = new Stripe(secretKey, { host: '127.0.0.1', port, protocol: 'http', maxNetworkRetries: 0 });
});

afterAll(async () => {
  await stopFake();
  await new Promise((resolve) => receiver?.close(resolve));
  await rm(store, { recursive: true, force: true });
});

beforeEach(() => {
  deliveries = [];
  refuseNext = 0;
});

const permitFee = {
  mode: 'payment' as const,
  line_items: [{ quantity: 1, price_data: { currency: 'usd', unit_amount: 1500, product_data: { name: 'Access permit — Pelletier Hill Farm' } } }],
  success_url: 'http://127.0.0.1:4331/payments/done?session_id={CHECKOUT_SESSION_ID}',
  cancel_url: 'http://127.0.0.1:4331/payments/cancelled?permit=p-1',
  client_reference_id: 'p-1',
  customer_email: 'hattie.brule@example.org',
  metadata: { permitId: 'p-1', paymentId: 'pay-1' },
};

const press = (url: string, button: 'pay' | 'cancel') => fetch(`${url}/${button}`, { method: 'POST', redirect: 'manual' });
const signatureTime = (header: string) => Number(/t=(\d+)/.exec(header)?.[1]);

/** A raw request, so the Host header is the one given (fetch sets its own). */
function rawGet(url: string, headers: Record<string, string>): Promise<number> {
  return new Promise((resolve, reject) => {
    request(url, { headers }, (res) => {
      res.resume();
      resolve(res.statusCode ?? 0);
    }).on('error', reject).end();
  });
}

describe('the local payments fake', () => {
  it('answers only requests addressed to 127.0.0.1 (a page reaching it through a rebound host name gets 421) and its test hooks only with the local token', async () => {
    expect(await rawGet(`${baseUrl}/__events`, { host: 'attacker.example', 'x-local-token': localToken })).toBe(421);
    expect(await rawGet(`${baseUrl}/v1/checkout/sessions/cs_test_x`, { host: `attacker.example:${port}`, authorization: `Bearer ${secretKey}` })).toBe(421);
    expect(await rawGet(`${baseUrl}/__events`, { host: `127.0.0.1:${port}` })).toBe(401);
    expect(await rawGet(`${baseUrl}/__events`, { host: `127.0.0.1:${port}`, 'x-local-token': 'guessed' })).toBe(401);
    expect(await rawGet(`${baseUrl}/__events`, { host: `127.0.0.1:${port}`, 'x-local-token': localToken })).toBe(200);
  });

  it("given no key or a key other than the account's, it answers 401 with the provider's error shape", async () => {
    const bare = await fetch(`${baseUrl}/v1/checkout/sessions/cs_test_x`);
    expect(bare.status).toBe(401);
    expect((await bare.json()).error.type).toBe('invalid_request_error');
    const wrong = new Stripe('sk_test_someone_else', { host: '127.0.0.1', port, protocol: 'http', maxNetworkRetries: 0 });
    await expect(wrong.checkout.sessions.create(permitFee)).rejects.toMatchObject({ type: 'StripeAuthenticationError', statusCode: 401 });
  });

  it('given the parameters the SDK sends for hosted checkout, it makes an open session and a checkout page', async () => {
    const session = await stripe.checkout.sessions.create(permitFee);
    expect(session).toMatchObject({
      object: 'checkout.session', status: 'open', payment_status: 'unpaid', amount_total: 1500, currency: 'usd',
      client_reference_id: 'p-1', metadata: { permitId: 'p-1', paymentId: 'pay-1' }, payment_intent: null,
    });
    expect(session.id).toMatch(/^cs_test_/);
    expect(session.url).toBe(`${baseUrl}/checkout/${session.id}`);
    expect(await stripe.checkout.sessions.retrieve(session.id)).toEqual(session);
    const page = await (await fetch(session.url ?? '')).text();
    expect(page).toContain('Local test checkout — no real money moves');
    expect(page).toContain('$15.00');
    expect(page).toContain('Access permit — Pelletier Hill Farm');
  });

  it('given an unknown session, it answers resource_missing', async () => {
    await expect(stripe.checkout.sessions.retrieve('cs_test_nothing')).rejects.toMatchObject({ type: 'StripeInvalidRequestError', statusCode: 404, code: 'resource_missing' });
  });

  it('given Pay, it signs checkout.session.completed the way the provider does, then redirects to the success url', async () => {
    const session = await stripe.checkout.sessions.create(permitFee);
    const answer = await press(session.url ?? '', 'pay');
    expect(answer.status).toBe(303);
    expect(answer.headers.get('location')).toBe(`http://127.0.0.1:4331/payments/done?session_id=${session.id}`);
    expect(deliveries).toHaveLength(1);
    const [delivery] = deliveries as [Delivery];
    const event = stripe.webhooks.constructEvent(delivery.body, delivery.signature, webhookSecret);
    expect(event.id).toMatch(/^evt_test_/);
    expect(event.type).toBe('checkout.session.completed');
    const paid = event.data.object as Stripe.Checkout.Session;
    expect(paid).toMatchObject({ id: session.id, status: 'complete', payment_status: 'paid', metadata: permitFee.metadata });
    expect(paid.payment_intent).toMatch(/^pi_test_/);
    // The SDK's own test signer, given the same body and timestamp, writes the same header.
    const timestamp = signatureTime(delivery.signature);
    expect(delivery.signature).toBe(stripe.webhooks.generateTestHeaderString({ payload: delivery.body, secret: webhookSecret, timestamp }));
    expect(() => stripe.webhooks.constructEvent(delivery.body, delivery.signature, 'whsec_another')).toThrow(Stripe.errors.StripeSignatureVerificationError);
    expect((await stripe.checkout.sessions.retrieve(session.id)).status).toBe('complete');
  });

  it('given an app that refuses the first deliveries, it retries and redirects once the app accepts', async () => {
    refuseNext = 2;
    const session = await stripe.checkout.sessions.create(permitFee);
    expect((await press(session.url ?? '', 'pay')).status).toBe(303);
    expect(deliveries).toHaveLength(3);
    const { events } = await (await fetch(`${baseUrl}/__events`, withToken)).json();
    const sent = events.find((e: { data: { object: { id: string } } }) => e.data.object.id === session.id);
    expect(sent.deliveries.map((d: { status: number }) => d.status)).toEqual([500, 500, 200]);
  });

  it('given Cancel, it expires the session, sends checkout.session.expired and redirects to the cancel url', async () => {
    const session = await stripe.checkout.sessions.create(permitFee);
    const answer = await press(session.url ?? '', 'cancel');
    expect(answer.status).toBe(303);
    expect(answer.headers.get('location')).toBe(permitFee.cancel_url);
    const [delivery] = deliveries as [Delivery];
    const event = stripe.webhooks.constructEvent(delivery.body, delivery.signature, webhookSecret);
    expect(event.type).toBe('checkout.session.expired');
    expect(await stripe.checkout.sessions.retrieve(session.id)).toMatchObject({ status: 'expired', payment_status: 'unpaid', url: null });
    expect((await press(`${baseUrl}/checkout/${session.id}`, 'pay')).status).toBe(303);
    expect((await stripe.checkout.sessions.retrieve(session.id)).status).toBe('expired');
  });

  it('given an open session expired through the API, it answers at once and sends the event after', async () => {
    const session = await stripe.checkout.sessions.create(permitFee);
    expect((await stripe.checkout.sessions.expire(session.id)).status).toBe('expired');
    await expect.poll(() => deliveries.length).toBe(1);
    await expect(stripe.checkout.sessions.expire(session.id)).rejects.toMatchObject({ statusCode: 400 });
  });

  it('given a paid session, it refunds the payment intent once; a repeated idempotency key answers the same refund', async () => {
    const session = await stripe.checkout.sessions.create(permitFee);
    await press(session.url ?? '', 'pay');
    const intent = String((await stripe.checkout.sessions.retrieve(session.id)).payment_intent);
    const refund = await stripe.refunds.create({ payment_intent: intent }, { idempotencyKey: `refund-${session.id}` });
    expect(refund).toMatchObject({ object: 'refund', amount: 1500, currency: 'usd', payment_intent: intent, status: 'succeeded' });
    expect(refund.id).toMatch(/^re_test_/);
    expect((await stripe.refunds.create({ payment_intent: intent }, { idempotencyKey: `refund-${session.id}` })).id).toBe(refund.id);
    await expect(stripe.refunds.create({ payment_intent: intent })).rejects.toMatchObject({ statusCode: 400, code: 'charge_already_refunded' });
    await expect(stripe.refunds.create({ payment_intent: 'pi_test_nothing' })).rejects.toMatchObject({ statusCode: 404, code: 'resource_missing' });
  });

  it('given a stored event, resend delivers the same body with a fresh, valid signature and reports the answer', async () => {
    const session = await stripe.checkout.sessions.create(permitFee);
    await press(session.url ?? '', 'pay');
    const [first] = deliveries as [Delivery];
    const { id } = JSON.parse(first.body) as { id: string };
    const resent = await (await fetch(`${baseUrl}/__events/${id}/resend`, { method: 'POST', ...withToken })).json();
    expect(resent).toEqual({ status: 200, body: { received: true } });
    const second = deliveries[1];
    expect(second?.body).toBe(first.body);
    expect(stripe.webhooks.constructEvent(second?.body ?? '', second?.signature ?? '', webhookSecret).id).toBe(id);
  });

  it('given a restart, it keeps its sessions and events', async () => {
    const session = await stripe.checkout.sessions.create(permitFee);
    const before = (await (await fetch(`${baseUrl}/__events`, withToken)).json()).events.length;
    await stopFake();
    fake = await startFake((receiver.address() as AddressInfo).port);
    expect(await stripe.checkout.sessions.retrieve(session.id)).toEqual(session);
    expect((await (await fetch(`${baseUrl}/__events`, withToken)).json()).events).toHaveLength(before);
  });
});
