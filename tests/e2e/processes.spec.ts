import { randomBytes, randomUUID } from 'node:crypto';
import { expect, request as playwrightRequest, test, type APIRequestContext } from '@playwright/test';
import { appServer, createAppDatabase, logLines, MailCatcher, type AppDatabase, type AppServer, type CaughtMail } from './app-processes';

/**
 * Three app processes on one database, as a deployment on several cores or machines runs them:
 * server A is `serve.mjs` with two processes (node:cluster), server B another `serve.mjs` with one;
 * both send mail to a catcher of their own (tests/e2e/app-processes.ts). Jobs must run once across
 * them, concurrent requests on either must share one limit, and mail must arrive once through a mail
 * server that was down and a crash in the middle of a send.
 *
 * The tests run in order on one set of servers. The crash (second) is checked late (fifth): the mail
 * it interrupted is sent again by the outbox's sweep, which takes mail left waiting a minute, so the
 * race and the breach run meanwhile. The schedule is checked last, when the servers have run for minutes.
 */
test.describe.configure({ mode: 'serial' });

let database: AppDatabase;
let catcher: MailCatcher;
let serverA: AppServer;
let serverB: AppServer;
let walter: APIRequestContext;
let forager: APIRequestContext;
let startedAt = 0;

const stamp = randomBytes(3).toString('hex');
/** Two foragers whose permits begin today on their parcel's calendar and end 14 days on (src/lib/reminders.ts: permitEndingLeadDays). */
const startingToday = [`starts-today-a-${stamp}@example.org`, `starts-today-b-${stamp}@example.org`];
let startingPermits: { id: string; email: string }[] = [];

const messagesWithId = (messages: CaughtMail[], mailId: string) => messages.filter((m) => m.messageId?.startsWith(`<${mailId}@`));

/** Signs in through the e-mailed link, read from this harness's catcher. */
async function signIn(email: string, server: AppServer) {
  const context = await playwrightRequest.newContext({ extraHTTPHeaders: { origin: server.url } });
  const asked = await context.post(`${server.url}/api/sign-in`, { data: { email } });
  expect(asked.status(), await asked.text()).toBe(202);
  let link = '';
  await expect
    .poll(async () => {
      const mail = (await catcher.messages()).find((m) => m.to.includes(email) && m.subject.includes('sign-in link'));
      link = mail?.text.match(/https?:\/\/\S+\/api\/auth\/callback\/\S+/)?.[0] ?? '';
      return link;
    }, { timeout: 20_000, message: `a sign-in link for ${email}` })
    .not.toBe('');
  const landed = await context.get(`${server.url}${new URL(link).pathname}${new URL(link).search}`);
  expect(landed.ok()).toBeTruthy();
  return context;
}

test.beforeAll(async () => {
  test.setTimeout(120_000);
  database = await createAppDatabase();
  const { sql } = database;
  // Approved permits that begin today (on each parcel's calendar, by the database's clock, which is the
  // servers'), written before any server runs: the date-changes job must make each active.
  const users = await sql<{ id: string; email: string }[]>`
    insert into users (id, email, name, roles)
    select gen_random_uuid()::text, email, 'Starts Today', '{forager}'::role[] from unnest(${startingToday}::text[]) as email
    returning id, email`;
  const parcels = await sql<{ id: string }[]>`select id from parcels where status <> 'archived' order by name limit 2`;
  expect(parcels).toHaveLength(2);
  startingPermits = [];
  for (const [n, user] of users.entries()) {
    const [permit] = await sql<{ id: string }[]>`
      insert into permits (parcel_id, holder_user_id, state, starts_on, ends_on, accepted_terms_id)
      select p.id, ${user.id}, 'approved', (now() at time zone p.time_zone)::date, (now() at time zone p.time_zone)::date + 14,
        (select t.id from terms t where t.parcel_id = p.id order by t.version desc limit 1)
      from parcels p where p.id = ${parcels[n]!.id}
      returning id`;
    startingPermits.push({ id: permit!.id, email: user.email });
  }
  catcher = await MailCatcher.start();
  serverA = await appServer(database, catcher, { processes: 2 });
  serverB = await appServer(database, catcher, { processes: 1 });
  startedAt = Date.now();
  await Promise.all([serverA.start(), serverB.start()]);
});

test.afterAll(async () => {
  test.setTimeout(60_000);
  await Promise.all([walter, forager].map((c) => c?.dispose()));
  await Promise.all([serverA, serverB].map((s) => s?.stop()));
  await catcher?.remove();
  await database?.drop();
});

test('given permits beginning today and two servers (three app processes) on one database, each permit turns active once and its holder is reminded once', async () => {
  for (const permit of startingPermits) {
    await expect.poll(async () => (await database.sql`select state from permits where id = ${permit.id}`)[0]?.state, { timeout: 30_000 }).toBe('active');
    const events = await database.sql`select to_state from permit_events where permit_id = ${permit.id}`;
    expect(events.map((e) => e.to_state)).toEqual(['active']);
    await expect
      .poll(async () => (await database.sql`select state from outgoing_mail where to_address = ${permit.email} and purpose = 'reminder-permit-ending'`).map((r) => r.state), { timeout: 30_000 })
      .toEqual(['sent']);
    const [mail] = await database.sql<{ id: string }[]>`select id from outgoing_mail where to_address = ${permit.email} and purpose = 'reminder-permit-ending'`;
    const caught = messagesWithId(await catcher.messages(), mail!.id);
    expect(caught.map((m) => [m.to, m.deliveries])).toEqual([[[permit.email], 1]]);
  }
});

let interruptedMailId = '';

test('given every app process killed while the mail server holds a mail it has received but not yet answered, the servers start again', async () => {
  test.setTimeout(90_000);
  await catcher.hold();
  const asked = await fetch(`${serverA.url}/api/sign-in`, { method: 'POST', headers: { 'content-type': 'application/json', origin: serverA.url }, body: JSON.stringify({ email: 'beth.lindqvist@example.org' }) });
  expect(asked.status).toBe(202);
  await expect.poll(() => catcher.held(), { timeout: 20_000, message: 'the mail held at the catcher' }).toBeGreaterThanOrEqual(1);
  const [mail] = await database.sql<{ id: string; state: string }[]>`
    select id, state from outgoing_mail where to_address = 'beth.lindqvist@example.org' order by created_at desc limit 1`;
  interruptedMailId = mail!.id;
  // Mid-send: the job holds the row's lock and waits for the mail server's answer.
  expect(mail!.state).toBe('waiting');
  await Promise.all([serverA.kill(), serverB.kill()]);
  await Promise.all([serverA.start(), serverB.start()]);
  // The mail server now accepts what it held: delivered once, though the sender never heard so.
  await catcher.release();
});

/** The parcel, allowance, permit and visit the race and the breach use, set up through the API on server A. */
const west = -72.95;
const south = 43.85;
const size = 0.003;
let visitId = '';
const speciesIds: Record<string, string> = {};
const entry = (speciesName: string, quantity: string, unit: string, extra: Record<string, unknown> = {}) => ({
  idempotencyKey: randomUUID(), visitId, speciesId: speciesIds[speciesName], method: 'pick', quantities: [{ quantity, unit }], ...extra,
});

test.describe('with a parcel, its limits and a forager on it', () => {
  test.beforeAll(async () => {
    test.setTimeout(60_000);
    [walter, forager] = [await signIn('landowner@example.org', serverA), await signIn('forager@example.org', serverB)];
    const ring = [[west, south], [west + size, south], [west + size, south + size], [west, south + size], [west, south]];
    const created = await walter.post(`${serverA.url}/api/parcels`, { data: { name: `Processes lot ${stamp}`, timeZone: 'America/New_York', nearingThresholdPercent: 80, openToRequests: false, description: '', boundary: { type: 'Polygon', coordinates: [ring] } } });
    expect(created.status(), await created.text()).toBe(201);
    const parcelId = (await created.json()).parcel.id as string;
    const { species } = (await (await walter.get(`${serverA.url}/api/species`)).json()) as { species: { id: string; commonName: string }[] };
    for (const s of species) speciesIds[s.commonName] = s.id;
    const allow = (name: string, limits: unknown[]) =>
      walter.put(`${serverA.url}/api/parcels/${parcelId}/allowances`, { data: { speciesId: speciesIds[name], seasons: [{ start: '01-01', end: '12-31' }], methods: ['pick'], limits } });
    expect((await allow('Fiddlehead (ostrich fern)', [{ scope: 'day', quantity: '10', unit: 'stem' }])).status()).toBe(200);
    expect((await allow('Oyster mushroom', [{ scope: 'day', quantity: '5', unit: 'kg' }])).status()).toBe(200);
    const granted = await walter.post(`${serverA.url}/api/parcels/${parcelId}/permits`, { data: { holder: { kind: 'forager', email: 'forager@example.org' }, startsOn: '2020-01-01', endsOn: '2099-12-31' } });
    expect(granted.status(), await granted.text()).toBe(201);
    const checkIn = await forager.post(`${serverB.url}/api/check-ins`, { data: { longitude: west + size / 2, latitude: south + size / 2, accuracyM: 5 } });
    expect(checkIn.status(), await checkIn.text()).toBe(200);
    const answer = await checkIn.json();
    expect(answer.verdict).toBe('clear');
    visitId = answer.visitId;
  });

  test('given 50 simultaneous one-stem entries against a limit of 10 stems, 25 to each server, exactly 10 are recorded and 40 refused', async () => {
    const send = (server: AppServer) => forager.post(`${server.url}/api/harvest-entries`, { data: entry('Fiddlehead (ostrich fern)', '1', 'stem'), headers: { origin: server.url } });
    const responses = await Promise.all([...Array.from({ length: 25 }, () => send(serverA)), ...Array.from({ length: 25 }, () => send(serverB))]);
    const statuses = responses.map((r) => r.status());
    expect(statuses.filter((s) => s === 201)).toHaveLength(10);
    expect(statuses.filter((s) => s === 409)).toHaveLength(40);
    for (const r of responses.filter((x) => x.status() === 409)) expect((await r.json()).error.code).toBe('would-go-over');
    const [{ count }] = await database.sql`select count(*)::int as count from harvest_entries where visit_id = ${visitId} and species_id = ${speciesIds['Fiddlehead (ostrich fern)']!}`;
    expect(count).toBe(10);
  });

  test('given the mail server down when a breach is recorded, the breach mail is tried again and arrives once when it is back', async () => {
    test.setTimeout(60_000);
    await catcher.stop();
    // 6 kg against a day limit of 5 kg, confirmed: a breach, told to the landowner at once.
    const recorded = await forager.post(`${serverA.url}/api/harvest-entries`, { data: entry('Oyster mushroom', '6', 'kg', { acknowledgeOver: true }), headers: { origin: serverA.url } });
    expect(recorded.status(), await recorded.text()).toBe(201);
    const entryId = (await recorded.json()).entry.id as string;
    const breachMail = () => database.sql<{ id: string; state: string; attempts: number }[]>`select id, state, attempts from outgoing_mail where dedupe_key like ${`breach:${entryId}:%`}`;
    await expect.poll(async () => (await breachMail()).some((m) => m.state === 'retrying' && m.attempts >= 1), { timeout: 20_000, message: 'a failed try' }).toBe(true);
    await catcher.start();
    await expect.poll(async () => (await breachMail()).map((m) => m.state), { timeout: 30_000 }).toEqual(expect.arrayContaining(['sent']));
    await expect.poll(async () => (await breachMail()).every((m) => m.state === 'sent'), { timeout: 30_000 }).toBe(true);
    const messages = await catcher.messages();
    for (const mail of await breachMail()) expect(messagesWithId(messages, mail.id).map((m) => m.deliveries), mail.id).toEqual([1]);
  });
});

test('given the mail interrupted by the kill, the outbox sends it again and the mailbox shows it once', async () => {
  // The sweep takes mail still waiting a minute after it was written, on its run each minute.
  test.setTimeout(200_000);
  await expect
    .poll(async () => (await database.sql`select state from outgoing_mail where id = ${interruptedMailId}`)[0]?.state, { timeout: 190_000, intervals: [1000] })
    .toBe('sent');
  const shown = messagesWithId(await catcher.messages(), interruptedMailId);
  expect(shown).toHaveLength(1);
  // Delivered twice over SMTP (before the kill, and again by the sweep) under one Message-ID.
  const deliveries = shown[0]!.deliveries;
  test.info().annotations.push({ type: 'raw SMTP deliveries of the interrupted mail', description: String(deliveries) });
  console.log(`the interrupted mail reached the mail server ${deliveries} times and shows once`);
  expect(deliveries).toBe(2);
});

test('given the servers ran for minutes, each scheduled job was queued once a minute across them and run by one process, and every mail shows once', async () => {
  test.setTimeout(200_000);
  const { sql } = database;
  // pg-boss's schedule (src/server/jobs/queue.ts): one process a time stamps the cron, and queues each due
  // job as a __pgboss__send-it job, at most one per queue and minute; that job then queues the real one.
  const slots = async (name: string) =>
    (await sql<{ slot: Date; state: string }[]>`select singleton_on as slot, state from pgboss.job where name = '__pgboss__send-it' and data->>'name' = ${name} order by singleton_on`);
  await expect.poll(async () => (await slots('date-changes')).length, { timeout: Math.max(1000, startedAt + 190_000 - Date.now()), intervals: [2000] }).toBeGreaterThanOrEqual(2);
  for (const name of ['date-changes', 'reminders']) {
    const made = await slots(name);
    // One real job per minute slot the schedule fired in (a slot's send-it job queues it, then completes):
    // were each process running its own schedule, there would be one per process.
    const [{ count }] = await sql`select count(*)::int as count from pgboss.job where name = ${name} and singleton_key is null`;
    expect(count, name).toBeGreaterThanOrEqual(made.filter((s) => s.state === 'completed').length);
    expect(count, name).toBeLessThanOrEqual(made.length);
    expect(new Set(made.map((s) => s.slot.getTime())).size, name).toBe(made.length);
  }
  // Every run any process logged is a job of the shared queue, and no job was run twice.
  // Each server's output runs on across its kill and restart.
  const runs = [serverA.output, serverB.output]
    .flatMap(logLines)
    .filter((line) => line.msg === 'job done' && (line.job === 'date-changes' || line.job === 'reminders'));
  expect(runs.length).toBeGreaterThanOrEqual(3);
  const runIds = runs.map((line) => String(line.jobId));
  expect(new Set(runIds).size).toBe(runIds.length);
  const known = await sql`select id::text from pgboss.job where id = any(${runIds}::uuid[])`;
  expect(known).toHaveLength(runIds.length);

  // Every mail of the run ends sent, and the mailbox shows each exactly once.
  await expect.poll(async () => (await sql`select state from outgoing_mail where state <> 'sent'`).length, { timeout: 60_000 }).toBe(0);
  const mails = await sql<{ id: string }[]>`select id from outgoing_mail`;
  const messages = await catcher.messages();
  for (const mail of mails) expect(messagesWithId(messages, mail.id), mail.id).toHaveLength(1);
  const redelivered = messages.filter((m) => m.deliveries > 1).length;
  test.info().annotations.push({ type: 'mails delivered more than once over SMTP', description: `${redelivered} of ${mails.length}` });
});
