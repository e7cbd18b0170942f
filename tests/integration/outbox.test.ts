import { eq, sql } from 'drizzle-orm';
import pino from 'pino';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, createDb, type Db } from '../../src/db/client';
import { readOutboxHealth, waitingMailIds } from '../../src/db/mail.queries';
import { applyMigrations } from '../../src/db/migrations';
import { outgoingMail } from '../../src/db/schema';
import { startJobs, stopJobs } from '../../src/server/jobs/queue';
import { deliverMail, sendMailJob, useMailSender, type MailSender } from '../../src/server/jobs/send-mail';
import { queueMail, type Mail } from '../../src/server/outbox';
import { createThrowawayDatabase, migrationsFolder, one, type ThrowawayDatabase } from './throwaway-database';

/*
 * The outbox on a database of its own, signed in as the app's role: a mail is a row written in the
 * transaction of the change it tells of, and the `send-mail` job sends it once, trying again while the
 * mail server fails. The mail server here is a function that records what it is given (or throws, as
 * nodemailer does when the server refuses the connection); the database is the real one.
 */
let throwaway: ThrowawayDatabase | undefined;
let app: Db | undefined;
const db = () => {
  if (!app) throw new Error('the app connection was not made');
  return app;
};
const log = pino({ level: 'silent' });
const from = 'Tallywood <mail@tallywood.example>';

/** Every message the worker's sender was given. */
const workerSent: Parameters<MailSender>[0][] = [];

const mail = (subject: string, extra: Partial<Mail> = {}): Mail => ({ purpose: 'test', to: 'reader@outbox.test', subject, text: `${subject}\n`, html: `<p>${subject}</p>`, ...extra });
const rowOf = (id: string) => one(db().select().from(outgoingMail).where(eq(outgoingMail.id, id)));
const rowsWithSubject = (subject: string) => db().select().from(outgoingMail).where(eq(outgoingMail.subject, subject));
const jobsFor = async (mailId: string) =>
  (await db().execute<{ n: number }>(sql`select count(*)::int as n from pgboss.job where name = 'send-mail' and data->>'mailId' = ${mailId}`))[0]?.n ?? 0;

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_outbox');
  await applyMigrations(throwaway.db, migrationsFolder);
  const appUrl = process.env.DATABASE_URL;
  if (!appUrl) throw new Error('DATABASE_URL is not set');
  const url = new URL(appUrl);
  url.pathname = `/${throwaway.name}`;
  app = createDb(url.toString(), { max: 3, hotMax: 1 });
  useMailSender(async (message) => void workerSent.push(message), { domain: 'tallywood.example' });
  await startJobs({ db: app, databaseUrl: url.toString(), log, jobs: [sendMailJob] });
}, 30_000);

afterAll(async () => {
  await stopJobs();
  if (app) await closeDb(app);
  await throwaway?.drop();
});

class RolledBack extends Error {}

describe('queueMail', () => {
  it('given a mail queued in a transaction that then rolls back, neither the mail nor its send job is left', async () => {
    let mailId: string | null = null;
    const outcome = await db()
      .transaction(async (tx) => {
        mailId = await queueMail(tx, mail('Rolled back'), { from, log });
        throw new RolledBack();
      })
      .catch((error: unknown) => error);
    expect(outcome).toBeInstanceOf(RolledBack);
    expect(mailId).not.toBeNull();
    expect(await rowsWithSubject('Rolled back')).toEqual([]);
    expect(await jobsFor(mailId ?? '')).toBe(0);
  });

  it('given a mail queued in a transaction that commits, the worker sends it once with a Message-ID made from its id, and it is marked sent', async () => {
    const mailId = await db().transaction((tx) => queueMail(tx, mail('Committed'), { from, log }));
    if (!mailId) throw new Error('no mail id');
    expect(await jobsFor(mailId)).toBe(1);
    // The worker polls every 5 s and is woken when a job is sent; the job becomes visible at commit.
    await expect.poll(async () => (await rowOf(mailId)).state, { timeout: 15_000, interval: 250 }).toBe('sent');
    const sent = workerSent.filter((m) => m.subject === 'Committed');
    expect(sent).toHaveLength(1);
    expect(sent[0]).toMatchObject({ messageId: `<${mailId}@tallywood.example>`, from, to: 'reader@outbox.test', text: 'Committed\n', html: '<p>Committed</p>' });
    const row = await rowOf(mailId);
    expect(row.attempts).toBe(1);
    expect(row.sentAt).not.toBeNull();
  }, 20_000);

  it('given a mail with a dedupe key queued twice, the second is not recorded, and the first is sent', async () => {
    const first = await queueMail(db(), mail('Once only', { dedupeKey: 'outbox-test-once' }), { from, log });
    const second = await queueMail(db(), mail('Once only', { dedupeKey: 'outbox-test-once' }), { from, log });
    expect(first).not.toBeNull();
    expect(second).toBeNull();
    expect(await rowsWithSubject('Once only')).toHaveLength(1);
    await expect.poll(async () => (await rowOf(first ?? '')).state, { timeout: 15_000, interval: 250 }).toBe('sent');
  }, 20_000);
});

/** A mail written straight into the table, with no job: only deliverMail below touches it. */
async function waitingMail(subject: string, extra: Partial<typeof outgoingMail.$inferInsert> = {}) {
  const row = await one(
    db()
      .insert(outgoingMail)
      .values({ purpose: 'test', fromAddress: from, toAddress: 'reader@outbox.test', subject, textBody: `${subject}\n`, htmlBody: `<p>${subject}</p>`, ...extra })
      .returning({ id: outgoingMail.id }),
  );
  return row.id;
}

describe('deliverMail (the send-mail job for one mail)', () => {
  it('given one mail delivered twice in turn and twice at once, it is sent once', async () => {
    const mailId = await waitingMail('Twice');
    const sent: string[] = [];
    const send: MailSender = async (message) => {
      await new Promise((resolve) => setTimeout(resolve, 200)); // a mail server that takes a moment, so the two at once overlap
      sent.push(message.messageId);
    };
    const atOnce = await Promise.all([deliverMail(db(), { mailId, send, domain: 'tallywood.example', log }), deliverMail(db(), { mailId, send, domain: 'tallywood.example', log })]);
    expect([...atOnce].sort()).toEqual(['sent', 'skipped']);
    expect(await deliverMail(db(), { mailId, send, domain: 'tallywood.example', log })).toBe('skipped');
    expect(sent).toEqual([`<${mailId}@tallywood.example>`]);
    expect((await rowOf(mailId)).state).toBe('sent');
  });

  it('given a mail server that refuses every try, the mail is retrying with the error after the first, and failed after the last, then not tried again', async () => {
    const mailId = await waitingMail('Refused', { dedupeKey: 'outbox-test-refused' });
    let tries = 0;
    const send: MailSender = async () => {
      tries += 1;
      throw new Error('connect ECONNREFUSED 127.0.0.1:9');
    };
    await expect(deliverMail(db(), { mailId, send, domain: 'tallywood.example', log, attempts: 2 })).rejects.toThrow('ECONNREFUSED');
    expect(await rowOf(mailId)).toMatchObject({ state: 'retrying', attempts: 1, error: 'connect ECONNREFUSED 127.0.0.1:9', sentAt: null, dedupeKey: 'outbox-test-refused' });

    await expect(deliverMail(db(), { mailId, send, domain: 'tallywood.example', log, attempts: 2 })).rejects.toThrow('ECONNREFUSED');
    // Failed for good, it gives up its dedupe key, so asking for the same mail again sends it.
    expect(await rowOf(mailId)).toMatchObject({ state: 'failed', attempts: 2, sentAt: null, dedupeKey: null });

    expect(await deliverMail(db(), { mailId, send, domain: 'tallywood.example', log, attempts: 2 })).toBe('skipped');
    expect(tries).toBe(2);
  });

  it('given a mail that failed once and then goes, it is sent', async () => {
    const mailId = await waitingMail('Second time lucky');
    let tries = 0;
    const send: MailSender = async () => {
      tries += 1;
      if (tries === 1) throw new Error('421 try again later');
    };
    await expect(deliverMail(db(), { mailId, send, domain: 'tallywood.example', log })).rejects.toThrow('421');
    expect(await deliverMail(db(), { mailId, send, domain: 'tallywood.example', log })).toBe('sent');
    expect(await rowOf(mailId)).toMatchObject({ state: 'sent', attempts: 2, error: null });
  });
});

describe('the sweep and the health counts', () => {
  it('given mail left waiting over a minute, the sweep finds it; mail waiting under a minute, or retrying, it leaves to its job', async () => {
    const now = new Date();
    const old = await waitingMail('Left waiting', { createdAt: new Date(now.getTime() - 2 * 60_000) });
    const fresh = await waitingMail('Just written', { createdAt: new Date(now.getTime() - 10_000) });
    const retrying = await waitingMail('Retrying', { createdAt: new Date(now.getTime() - 2 * 60_000), state: 'retrying' });
    const found = await waitingMailIds(db(), { before: new Date(now.getTime() - 60_000) });
    expect(found).toContain(old);
    expect(found).not.toContain(fresh);
    expect(found).not.toContain(retrying);
  });

  it('given the mail of this file, health counts it by state, failed only since the given instant', async () => {
    // Counted by hand from the tests above: 'Refused' failed, 'Retrying' retrying, 'Just written' waiting,
    // and 'Left waiting' waiting unless the minute sweep has queued it and the worker sent it already.
    const health = await readOutboxHealth(db(), { failedSince: new Date(Date.now() - 60 * 60_000) });
    expect(health.retrying).toBe(1);
    expect(health.failed).toBe(1);
    expect(health.waiting).toBeGreaterThanOrEqual(1);
    expect(health.waiting).toBeLessThanOrEqual(2);
    expect((await readOutboxHealth(db(), { failedSince: new Date(Date.now() + 60_000) })).failed).toBe(0);
  });
});
