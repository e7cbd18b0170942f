import type { ChildProcess } from 'node:child_process';
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { eq, sql } from 'drizzle-orm';
import pino from 'pino';
import Stripe from 'stripe';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { applyMigrations } from '../../src/db/migrations';
import { listPermitsForParcel } from '../../src/db/permits.queries';
import { outgoingMail, parcels, payments, permits } from '../../src/db/schema';
import { refundPaymentJob, refundPaymentQueue, useRefunder, type RefundJobData } from '../../src/server/jobs/refund-payment';
import { createThrowawayDatabase, insertUser, migrationsFolder, one, referenceBoundary, type ThrowawayDatabase } from './throwaway-database';
import { startPaymentsFake, stopPaymentsFake } from './payments-fake';

/*
 * The `refund-payment` job, driven directly (as pg-boss would run it) against the local payments fake
 * through the official `stripe` SDK, on a database of its own. The fake "refuses" a refund by not being
 * there: stopped, every call is refused at the connection, as when the provider cannot be reached.
 */
const secretKey = 'sk_test_fake_refunds';
const localToken = 'refunds-test-local-token';
const log = pino({ level: 'silent' });
const mailFrom = 'Tallywood <mail@tallywood.example>';
let throwaway: ThrowawayDatabase | undefined;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};
let fake: ChildProcess | undefined;
let receiver: Server;
let store: string;
let port: number;
let stripe: Stripe;
const ids = { owner: '', payer: '', parcel: '' };

async function listen(server: Server, onPort = 0) {
  await new Promise<void>((resolve) => server.listen(onPort, '127.0.0.1', resolve));
  return (server.address() as AddressInfo).port;
}

/** The payments fake (tests/integration/payments-fake.ts), its webhooks to this test's receiver. */
const startFake = () =>
  startPaymentsFake({ port, store, webhookUrl: `http://127.0.0.1:${(receiver.address() as AddressInfo).port}/hook`, localToken, secretKey, webhookSecret: 'whsec_fake_refunds' });
const stopFake = () => stopPaymentsFake(fake);

/** The refunds the fake made for one payment intent, read from its own store (scripts/payments-fake.ts keeps state.json). */
async function refundsAtFake(intent: string) {
  const state = JSON.parse(await readFile(join(store, 'state.json'), 'utf8')) as { refunds: { payment_intent: string; amount: number }[] };
  return state.refunds.filter((r) => r.payment_intent === intent);
}

/** A permit paid through the fake's hosted checkout, and our payment row for it: 'paid', as the webhook leaves it. */
async function paidPermit(cents: number) {
  const permit = await one(db().insert(permits).values({ parcelId: ids.parcel, holderUserId: ids.payer, state: 'revoked', startsOn: '2030-06-01', endsOn: '2030-06-30', feeMinor: cents, currency: 'usd' }).returning());
  const session = await stripe.checkout.sessions.create({
    mode: 'payment', line_items: [{ quantity: 1, price_data: { currency: 'usd', unit_amount: cents, product_data: { name: 'Access permit — Refund Hollow' } } }],
    success_url: 'http://127.0.0.1:9/payments/done?session_id={CHECKOUT_SESSION_ID}', cancel_url: 'http://127.0.0.1:9/payments/cancelled', metadata: { permitId: permit.id },
  });
  await fetch(`${session.url}/pay`, { method: 'POST', redirect: 'manual' });
  const intent = String((await stripe.checkout.sessions.retrieve(session.id)).payment_intent);
  const payment = await one(
    db().insert(payments).values({ permitId: permit.id, payerId: ids.payer, providerSessionId: session.id, providerPaymentId: intent, amountMinor: cents, currency: 'usd', state: 'paid', paidAt: new Date() }).returning(),
  );
  return { permit, payment, intent };
}

const now = new Date('2026-12-03T12:00:00Z');
const lastTry = refundPaymentQueue.retryLimit + 1;
const run = (data: RefundJobData, attempt: number) => refundPaymentJob.run({ db: db(), now, data, attempt: { number: attempt, last: attempt === lastTry }, log });
const paymentRow = (id: string) => one(db().select().from(payments).where(eq(payments.id, id)));
const mailsAbout = (paymentId: string) =>
  db().select({ to: outgoingMail.toAddress, purpose: outgoingMail.purpose, subject: outgoingMail.subject, text: outgoingMail.textBody }).from(outgoingMail).where(sql`${outgoingMail.textBody} like ${`%${paymentId}%`}`);

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_refunds');
  await applyMigrations(throwaway.db, migrationsFolder);
  ids.owner = await insertUser(db(), 'owner@refunds.test', 'Olive Owner', ['forager', 'landowner']);
  ids.payer = await insertUser(db(), 'payer@refunds.test', 'Pat Payer');
  ids.parcel = (await one(db().insert(parcels).values({ ownerId: ids.owner, name: 'Refund Hollow', status: 'listed', boundary: referenceBoundary, areaM2: 876_163.448, timeZone: 'America/New_York' }).returning())).id;
  store = await mkdtemp(join(tmpdir(), 'tallywood-refunds-'));
  receiver = createServer((req, res) => {
    req.resume();
    req.on('end', () => res.writeHead(200, { 'content-type': 'application/json' }).end('{"received":true}'));
  });
  await listen(receiver);
  const probe = createServer();
  port = await listen(probe);
  await new Promise((resolve) => probe.close(resolve));
  fake = await startFake();
  stripe = new Stripe(secretKey, { host: '127.0.0.1', port, protocol: 'http', maxNetworkRetries: 0 });
  useRefunder({ stripe, mailFrom });
}, 60_000);

afterAll(async () => {
  await stopFake();
  await new Promise((resolve) => receiver?.close(resolve));
  if (store) await rm(store, { recursive: true, force: true });
  await throwaway?.drop();
});

describe('the refund-payment job', () => {
  it('given the provider refusing the first try and answering the second, the fee is refunded once, the payer told once, and a run again changes nothing', async () => {
    const { payment, intent } = await paidPermit(1500);
    const data = { paymentId: payment.id, reason: 'The permit was revoked before its first day.', actorId: ids.owner };
    await stopFake();
    await expect(run(data, 1)).rejects.toThrow();
    expect(await paymentRow(payment.id)).toMatchObject({ state: 'paid', refundFailedAt: null });
    expect(await mailsAbout(payment.id)).toEqual([]);

    fake = await startFake();
    await expect(run(data, 2)).resolves.toBeUndefined();
    expect(await paymentRow(payment.id)).toMatchObject({ state: 'refunded', refundFailedAt: null });
    // A job delivered again (pg-boss promises at least once) finds the payment refunded.
    await run(data, 3);
    expect((await refundsAtFake(intent)).map((r) => r.amount)).toEqual([1500]);
    expect(await mailsAbout(payment.id)).toEqual([expect.objectContaining({ to: 'payer@refunds.test', purpose: 'refund', subject: 'Refund: $15.00 for your permit at Refund Hollow' })]);
  }, 60_000);

  it('given a refund the provider made whose answer was lost, the next try, under a key of its own, is refused as already refunded and records the refund without refunding twice', async () => {
    const { payment, intent } = await paidPermit(900);
    // The provider refunded under the payment's key, then the connection dropped before our commit.
    await stripe.refunds.create({ payment_intent: intent, metadata: { permitId: payment.permitId, paymentId: payment.id } }, { idempotencyKey: `refund-${payment.id}` });
    await run({ paymentId: payment.id, reason: 'Paid after the permit ended.', actorId: null }, 2);
    expect((await paymentRow(payment.id)).state).toBe('refunded');
    expect((await refundsAtFake(intent)).map((r) => r.amount)).toEqual([900]);
  });

  it('given the provider refusing the last try, the payment is marked for a refund by hand and its landowner mailed once, in the same transaction', async () => {
    const { permit, payment, intent } = await paidPermit(2500);
    const data = { paymentId: payment.id, reason: 'The permit was revoked before its first day.', actorId: ids.owner, origin: 'https://tallywood.example' };
    await stopFake();
    await expect(run(data, lastTry - 1)).rejects.toThrow();
    expect((await paymentRow(payment.id)).refundFailedAt).toBeNull();
    await expect(run(data, lastTry)).rejects.toThrow();
    await expect(run(data, lastTry)).rejects.toThrow(); // run again: marked and mailed once
    fake = await startFake();

    const row = await paymentRow(payment.id);
    expect(row).toMatchObject({ state: 'paid', refundFailedAt: now });
    const mails = await mailsAbout(payment.id);
    expect(mails).toEqual([expect.objectContaining({ to: 'owner@refunds.test', purpose: 'refund-failed', subject: 'Refund failed: $25.00 to Pat Payer for Refund Hollow needs a refund by hand' })]);
    expect(mails[0]?.text).toContain(`Please refund the $25.00 by hand through the payment service, to Pat Payer (payer@refunds.test), quoting payment reference ${payment.id}.`);
    const written = await db().execute<{ xmin: string }>(sql`select xmin::text as xmin from payments where id = ${payment.id}::uuid union all select xmin::text from outgoing_mail where purpose = 'refund-failed' and text_body like ${`%${payment.id}%`}`);
    expect(new Set(written.map((r) => r.xmin)).size).toBe(1);
    expect(await refundsAtFake(intent)).toEqual([]);
    // The landowner's Permits page reads the mark (src/components/land/PermitTable.astro shows it in words).
    const listed = await listPermitsForParcel(db(), { parcelId: ids.parcel, ownerId: ids.owner });
    expect(listed.find((p) => p.id === permit.id)?.refundFailedAt).not.toBeNull();
  }, 60_000);
});
