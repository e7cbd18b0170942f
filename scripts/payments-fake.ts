// The local stand-in for the hosted payment provider (Stripe): the slice of its REST API that the
// official `stripe` SDK calls for hosted checkout and refunds, a checkout page with Pay and Cancel,
// and webhooks signed the way the provider signs them. State survives restarts in PAYMENTS_FAKE_STORE.
import { createHash, createHmac, randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import { createServer, type IncomingMessage, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import { join } from 'node:path';
import { localRequestProblem } from './lib/local-fake.mjs';

type Session = {
  id: string; object: 'checkout.session'; mode: 'payment'; status: 'open' | 'complete' | 'expired';
  payment_status: 'unpaid' | 'paid'; amount_subtotal: number; amount_total: number; currency: string;
  url: string | null; success_url: string; cancel_url: string | null; client_reference_id: string | null;
  customer_email: string | null; metadata: Record<string, string>; payment_intent: string | null;
  created: number; expires_at: number; livemode: false;
};
type LineItem = { name: string; unitAmount: number; quantity: number; currency: string };
type Refund = { id: string; object: 'refund'; amount: number; currency: string; payment_intent: string; status: 'succeeded'; reason: string | null; metadata: Record<string, string>; created: number };
type StripeEvent = { id: string; object: 'event'; api_version: string; created: number; type: string; livemode: false; pending_webhooks: number; data: { object: Session } };
type Delivery = { at: string; status: number | null; error?: string };
type State = {
  sessions: Record<string, { session: Session; lineItems: LineItem[] }>;
  refunds: Refund[];
  events: { event: StripeEvent; deliveries: Delivery[] }[];
  idempotency: Record<string, { fingerprint: string; status: number; body: unknown }>;
};

const requestedPort = Number(process.env.PAYMENTS_FAKE_PORT ?? 2600);
const store = process.env.PAYMENTS_FAKE_STORE ?? join(process.cwd(), '.local', 'payments');
const webhookUrl = process.env.PAYMENTS_WEBHOOK_URL ?? 'http://127.0.0.1:4321/api/payments/webhook';
const webhookSecret = process.env.STRIPE_WEBHOOK_SECRET ?? 'whsec_tallywood_local';
/** The one secret key this fake account accepts; any `sk_test_` key while unset. */
const secretKey = process.env.STRIPE_SECRET_KEY;
/** The API version the stripe 23.1.0 SDK pins; events carry it as the provider's do. */
const apiVersion = '2026-10-28.endive';
/** Delays before each webhook attempt: bounded, so Pay answers within a few seconds even when the app is down. */
const retryDelaysMs = [0, 250, 500, 1000, 2000];
const file = join(store, 'state.json');
/** The test hooks (/__events) need the local token; the API needs the secret key, the checkout page neither. */
const localToken = process.env.LOCAL_FAKES_TOKEN;

mkdirSync(store, { recursive: true });
const state: State = existsSync(file) ? JSON.parse(readFileSync(file, 'utf8')) : { sessions: {}, refunds: [], events: [], idempotency: {} };
let baseUrl = `http://127.0.0.1:${requestedPort}`;

function save() {
  writeFileSync(`${file}.tmp`, JSON.stringify(state));
  renameSync(`${file}.tmp`, file);
}

const newId = (prefix: string) => `${prefix}_${randomBytes(12).toString('base64url').replace(/[-_]/g, 'x')}`;
const unixNow = () => Math.floor(Date.now() / 1000);

class ApiError extends Error {
  constructor(readonly status: number, message: string, readonly extra: { code?: string; param?: string; type?: string } = {}) {
    super(message);
  }
}

/** Form bodies as the SDK encodes them (`line_items[0][price_data][currency]=usd`) back into objects. */
function parseForm(body: string): Record<string, unknown> {
  const root: Record<string, unknown> = {};
  for (const [key, value] of new URLSearchParams(body)) {
    const path = key.split(/\[|\]\[|\]/).filter(Boolean);
    let node = root as Record<string, unknown>;
    path.forEach((part, i) => {
      if (i === path.length - 1) node[part] = value;
      else node = (node[part] ??= {}) as Record<string, unknown>;
    });
  }
  return root;
}

const text = (value: unknown) => (typeof value === 'string' && value !== '' ? value : null);
function required(params: Record<string, unknown>, name: string): string {
  const value = text(params[name]);
  if (!value) throw new ApiError(400, `Missing required param: ${name}.`, { code: 'parameter_missing', param: name });
  return value;
}

function sessionRecord(id: string) {
  const record = state.sessions[id];
  if (!record) throw new ApiError(404, `No such checkout.session: '${id}'`, { code: 'resource_missing', param: 'session' });
  if (record.session.status === 'open' && unixNow() > record.session.expires_at) void deliverWithRetries(close(record.session, 'expired'));
  return record;
}

function createSession(params: Record<string, unknown>): Session {
  if (params.mode !== 'payment') throw new ApiError(400, 'This local fake supports mode=payment only.', { param: 'mode' });
  const successUrl = required(params, 'success_url');
  const items = Object.values((params.line_items ?? {}) as Record<string, Record<string, unknown>>);
  if (items.length === 0) throw new ApiError(400, 'Missing required param: line_items.', { code: 'parameter_missing', param: 'line_items' });
  const lineItems = items.map((item, i) => {
    const price = (item.price_data ?? {}) as Record<string, unknown>;
    const unitAmount = Number(price.unit_amount);
    const quantity = Number(item.quantity ?? 1);
    if (!Number.isInteger(unitAmount) || unitAmount < 0) throw new ApiError(400, 'Invalid integer: unit_amount.', { param: `line_items[${i}][price_data][unit_amount]` });
    if (!Number.isInteger(quantity) || quantity < 1) throw new ApiError(400, 'Invalid integer: quantity.', { param: `line_items[${i}][quantity]` });
    return { name: text((price.product_data as Record<string, unknown> | undefined)?.name) ?? 'Item', unitAmount, quantity, currency: required(price, 'currency').toLowerCase() };
  });
  const amount = lineItems.reduce((sum, item) => sum + item.unitAmount * item.quantity, 0);
  const id = newId('cs_test');
  const created = unixNow();
  const session: Session = {
    id, object: 'checkout.session', mode: 'payment', status: 'open', payment_status: 'unpaid',
    amount_subtotal: amount, amount_total: amount, currency: lineItems[0]?.currency ?? 'usd',
    url: `${baseUrl}/checkout/${id}`, success_url: successUrl, cancel_url: text(params.cancel_url),
    client_reference_id: text(params.client_reference_id), customer_email: text(params.customer_email),
    metadata: (params.metadata ?? {}) as Record<string, string>, payment_intent: null,
    created, expires_at: created + 24 * 60 * 60, livemode: false,
  };
  state.sessions[id] = { session, lineItems };
  save();
  return session;
}

function createRefund(params: Record<string, unknown>): Refund {
  const paymentIntent = required(params, 'payment_intent');
  const record = Object.values(state.sessions).find((r) => r.session.payment_intent === paymentIntent);
  if (!record) throw new ApiError(404, `No such payment_intent: '${paymentIntent}'`, { code: 'resource_missing', param: 'payment_intent' });
  const refunded = state.refunds.filter((r) => r.payment_intent === paymentIntent).reduce((sum, r) => sum + r.amount, 0);
  const left = record.session.amount_total - refunded;
  if (left <= 0) throw new ApiError(400, `Charge for ${paymentIntent} has already been refunded.`, { code: 'charge_already_refunded' });
  const amount = params.amount === undefined ? left : Number(params.amount);
  if (!Number.isInteger(amount) || amount < 1 || amount > left) throw new ApiError(400, `Refund amount must be between 1 and ${left}.`, { code: 'amount_too_large', param: 'amount' });
  const refund: Refund = {
    id: newId('re_test'), object: 'refund', amount, currency: record.session.currency, payment_intent: paymentIntent,
    status: 'succeeded', reason: text(params.reason), metadata: (params.metadata ?? {}) as Record<string, string>, created: unixNow(),
  };
  state.refunds.push(refund);
  save();
  return refund;
}

/** Ends an open session (paid or expired) and records the event that says so. */
function close(session: Session, outcome: 'complete' | 'expired') {
  session.status = outcome;
  session.url = null;
  if (outcome === 'complete') {
    session.payment_status = 'paid';
    session.payment_intent = newId('pi_test');
  }
  const event: StripeEvent = {
    id: newId('evt_test'), object: 'event', api_version: apiVersion, created: unixNow(), livemode: false, pending_webhooks: 1,
    type: outcome === 'complete' ? 'checkout.session.completed' : 'checkout.session.expired',
    data: { object: structuredClone(session) },
  };
  const stored = { event, deliveries: [] as Delivery[] };
  state.events.push(stored);
  save();
  return stored;
}

/** Sends an event until the app answers 2xx, a bounded number of times with growing pauses. */
async function deliverWithRetries(stored: State['events'][number]) {
  for (const delay of retryDelaysMs) {
    await new Promise((r) => setTimeout(r, delay));
    if ((await deliver(stored)).ok) return;
  }
  console.error(`webhook ${stored.event.id} (${stored.event.type}) was not accepted by ${webhookUrl}; resend it with POST /__events/${stored.event.id}/resend`);
}

/** `Stripe-Signature: t=<unix>,v1=<hex HMAC-SHA256 of "<t>.<body>">`, as https://docs.stripe.com/webhooks/signature describes. */
function signature(body: string, timestamp: number) {
  return `t=${timestamp},v1=${createHmac('sha256', webhookSecret).update(`${timestamp}.${body}`).digest('hex')}`;
}

async function deliver(stored: State['events'][number]) {
  const body = JSON.stringify(stored.event, null, 2);
  try {
    const response = await fetch(webhookUrl, {
      method: 'POST',
      headers: { 'content-type': 'application/json; charset=utf-8', 'stripe-signature': signature(body, unixNow()), 'user-agent': 'Stripe/1.0 (+https://stripe.com/docs/webhooks)' },
      body,
      signal: AbortSignal.timeout(10_000),
    });
    const answer = await response.text();
    stored.deliveries.push({ at: new Date().toISOString(), status: response.status });
    save();
    return { ok: response.ok, status: response.status, answer };
  } catch (error) {
    stored.deliveries.push({ at: new Date().toISOString(), status: null, error: String(error) });
    save();
    return { ok: false, status: null, answer: String(error) };
  }
}

const escape = (s: string) => s.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);
const money = (minor: number, currency: string) => {
  const format = new Intl.NumberFormat('en-US', { style: 'currency', currency: currency.toUpperCase() });
  return format.format(minor / 10 ** (format.resolvedOptions().maximumFractionDigits ?? 2));
};

function checkoutPage({ session, lineItems }: State['sessions'][string]) {
  const items = lineItems.map((i) => `<li>${escape(i.name)}${i.quantity > 1 ? ` × ${i.quantity}` : ''}</li>`).join('');
  const action = session.status === 'open'
    ? `<form method="post" action="/checkout/${session.id}/pay"><button class="pay">Pay</button></form>
       <form method="post" action="/checkout/${session.id}/cancel"><button class="cancel">Cancel</button></form>`
    : `<p>This checkout is ${session.status === 'complete' ? 'paid' : 'expired'}.</p>`;
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>Local test checkout</title><style>
body{font-family:system-ui,sans-serif;background:#f4f1ea;color:#23301f;margin:0;padding:40px 16px}
main{max-width:420px;margin:auto;background:#fff;border:1px solid #d9cfc0;border-radius:10px;padding:24px}
.banner{background:#fff4d6;border:1px solid #e0c071;border-radius:6px;padding:8px 12px;font-weight:600}
.amount{font-size:32px;font-weight:700;margin:16px 0 4px}.actions{display:flex;gap:12px;margin-top:20px}
button{font:inherit;font-weight:600;border-radius:6px;padding:10px 22px;cursor:pointer}
.pay{background:#3d6437;color:#fff;border:0}.cancel{background:#fff;border:1px solid #b9ab97;color:#23301f}
</style></head><body><main>
<p class="banner" role="note">Local test checkout — no real money moves</p>
<h1>Checkout</h1><ul>${items}</ul>
<p class="amount" data-testid="amount">${escape(money(session.amount_total, session.currency))}</p>
${session.customer_email ? `<p>Receipt to ${escape(session.customer_email)}</p>` : ''}
<div class="actions">${action}</div></main></body></html>`;
}

async function readBody(req: IncomingMessage) {
  const chunks: Buffer[] = [];
  for await (const chunk of req) chunks.push(chunk as Buffer);
  return Buffer.concat(chunks).toString('utf8');
}

function send(res: ServerResponse, status: number, body: unknown, headers: Record<string, string> = {}) {
  res.writeHead(status, { 'content-type': 'application/json', 'request-id': newId('req'), ...headers }).end(JSON.stringify(body));
}

function authorize(req: IncomingMessage) {
  const key = /^Bearer (\S+)$/.exec(req.headers.authorization ?? '')?.[1];
  if (!key) throw new ApiError(401, "You did not provide an API key. You need to provide your API key in the Authorization header, using Bearer auth (e.g. 'Authorization: Bearer YOUR_SECRET_KEY').");
  if (secretKey ? key !== secretKey : !key.startsWith('sk_test_')) throw new ApiError(401, `Invalid API Key provided: ${key.slice(0, 8)}****${key.slice(-4)}`);
}

/** The provider's REST API: JSON answers, errors as `{ error: { type, message, code?, param? } }`. */
async function api(req: IncomingMessage, res: ServerResponse, path: string) {
  authorize(req);
  const body = req.method === 'POST' ? await readBody(req) : '';
  const key = req.method === 'POST' ? req.headers['idempotency-key'] : undefined;
  const fingerprint = createHash('sha256').update(`${req.method} ${path} ${body}`).digest('hex');
  const replay = typeof key === 'string' ? state.idempotency[key] : undefined;
  if (replay) {
    if (replay.fingerprint !== fingerprint) throw new ApiError(400, `Keys for idempotent requests can only be used with the same parameters they were first used with.`, { type: 'idempotency_error' });
    return send(res, replay.status, replay.body, { 'idempotent-replayed': 'true' });
  }
  const params = parseForm(body);
  const sessionPath = /^\/v1\/checkout\/sessions\/([\w-]+)(\/expire)?$/.exec(path);
  let result: unknown;
  if (req.method === 'POST' && path === '/v1/checkout/sessions') result = createSession(params);
  else if (req.method === 'GET' && sessionPath && !sessionPath[2]) result = sessionRecord(sessionPath[1] ?? '').session;
  else if (req.method === 'POST' && sessionPath?.[2]) {
    const { session } = sessionRecord(sessionPath[1] ?? '');
    if (session.status !== 'open') throw new ApiError(400, 'Only Checkout Sessions with a status in ["open"] can be expired.', { code: 'checkout_session_not_open' });
    // The provider sends webhooks on its own time, never inside the API call that caused them.
    void deliverWithRetries(close(session, 'expired'));
    result = session;
  } else if (req.method === 'POST' && path === '/v1/refunds') result = createRefund(params);
  else throw new ApiError(404, `Unrecognized request URL (${req.method}: ${path}).`);
  if (typeof key === 'string') {
    state.idempotency[key] = { fingerprint, status: 200, body: result };
    // The provider forgets keys after a day; the fake keeps the newest ones.
    for (const old of Object.keys(state.idempotency).slice(0, -1000)) delete state.idempotency[old];
    save();
  }
  send(res, 200, result);
}

/** The hosted checkout page and its two buttons. */
async function checkout(req: IncomingMessage, res: ServerResponse, id: string, step: string | undefined) {
  const record = sessionRecord(id);
  const { session } = record;
  if (req.method === 'GET' && !step) {
    res.writeHead(200, { 'content-type': 'text/html; charset=utf-8' }).end(checkoutPage(record));
    return;
  }
  if (req.method !== 'POST' || session.status !== 'open') {
    res.writeHead(303, { location: `/checkout/${id}` }).end();
    return;
  }
  // Unlike the provider, the fake holds the redirect until the app has the webhook, so return pages and tests see it.
  await deliverWithRetries(close(session, step === 'pay' ? 'complete' : 'expired'));
  const target = step === 'pay' ? session.success_url.replaceAll('{CHECKOUT_SESSION_ID}', id) : (session.cancel_url ?? `/checkout/${id}`);
  res.writeHead(303, { location: target }).end();
}

/** Hooks for tests: the events sent so far, and a re-send of one with a fresh signature. */
async function testHooks(req: IncomingMessage, res: ServerResponse, id: string | undefined) {
  if (req.method === 'GET' && !id) return send(res, 200, { events: [...state.events].reverse().map((e) => ({ ...e.event, deliveries: e.deliveries })) });
  const stored = state.events.find((e) => e.event.id === id);
  if (req.method !== 'POST' || !stored) throw new ApiError(404, `No such event: '${id}'`, { code: 'resource_missing' });
  const { status, answer } = await deliver(stored);
  let parsed: unknown = answer;
  try { parsed = JSON.parse(answer); } catch { /* not JSON: keep the text */ }
  send(res, 200, { status, body: parsed });
}

const server = createServer((req, res) => {
  const path = new URL(req.url ?? '/', baseUrl).pathname;
  const checkoutPath = /^\/checkout\/([\w-]+)(?:\/(pay|cancel))?$/.exec(path);
  const eventsPath = /^\/__events(?:\/([\w-]+)\/resend)?$/.exec(path);
  const problem = localRequestProblem(req, { port: (server.address() as AddressInfo).port, token: localToken, needsToken: path.startsWith('/__events') });
  const handled = problem ? Promise.reject(new ApiError(problem.status, problem.message))
    : path.startsWith('/v1/') ? api(req, res, path)
    : checkoutPath ? checkout(req, res, checkoutPath[1] ?? '', checkoutPath[2])
    : eventsPath ? testHooks(req, res, eventsPath[1])
    : Promise.reject(new ApiError(404, `Unrecognized request URL (${req.method}: ${path}).`));
  handled.catch((error: unknown) => {
    if (res.headersSent) return;
    if (!(error instanceof ApiError)) console.error(error);
    const e = error instanceof ApiError ? error : new ApiError(500, 'An error occurred in the local payments fake.');
    const type = e.extra.type ?? (e.status >= 500 ? 'api_error' : 'invalid_request_error');
    send(res, e.status, { error: { type, message: e.message, ...(e.extra.code ? { code: e.extra.code } : {}), ...(e.extra.param ? { param: e.extra.param } : {}) } },
      e.status === 401 ? { 'www-authenticate': 'Bearer realm="Stripe"' } : {});
  });
});

server.listen(requestedPort, '127.0.0.1', () => {
  baseUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  console.log(`local payments fake: API and checkout on ${baseUrl}, webhooks to ${webhookUrl}`);
});

function shutdown() {
  server.close(() => process.exit(0));
  setTimeout(() => process.exit(0), 2000).unref();
}
process.on('SIGTERM', shutdown);
process.on('SIGINT', shutdown);
