import { and, eq, gt, inArray, isNotNull, lt, sql } from 'drizzle-orm';
import type { Executor } from './client';
import { outgoingMail } from './schema';

export type OutgoingMailInput = {
  purpose: string;
  fromAddress: string;
  toAddress: string;
  subject: string;
  textBody: string;
  htmlBody: string;
  attachments?: { filename: string; contentType: string; content: string }[] | null;
  clientAddress?: string | null;
  dedupeKey?: string | null;
};

/**
 * Records a mail to be sent, whole, as 'waiting'; its id. With a `dedupeKey` already recorded, nothing
 * is recorded and the answer is null: that mail went (or is going) already.
 */
export async function recordMail(db: Executor, input: OutgoingMailInput) {
  const [row] = await db
    .insert(outgoingMail)
    .values({ ...input, attachments: input.attachments ?? null, state: 'waiting' })
    .onConflictDoNothing({ target: outgoingMail.dedupeKey })
    .returning({ id: outgoingMail.id });
  if (!row && !input.dedupeKey) throw new Error('outgoing mail was not recorded');
  return row?.id ?? null;
}

/**
 * The mail to send, locked for this transaction; null when there is none (rolled back, or not
 * committed yet) or another worker holds it (SKIP LOCKED: that one is sending it).
 */
export async function lockMailToSend(tx: Executor, { id }: { id: string }) {
  const [row] = await tx.select().from(outgoingMail).where(eq(outgoingMail.id, id)).for('update', { skipLocked: true });
  return row ?? null;
}

export async function markMailSent(db: Executor, { id, now }: { id: string; now: Date }) {
  await db
    .update(outgoingMail)
    .set({ state: 'sent', sentAt: now, error: null, attempts: sql`${outgoingMail.attempts} + 1` })
    .where(eq(outgoingMail.id, id));
}

/** A try that failed: 'retrying', or 'failed' when it was the last (a failed mail gives up its dedupe key, so asking again sends it). */
export async function markMailAttemptFailed(db: Executor, { id, error, last }: { id: string; error: string; last: boolean }) {
  await db
    .update(outgoingMail)
    .set(last ? { state: 'failed', error, dedupeKey: null, attempts: sql`${outgoingMail.attempts} + 1` } : { state: 'retrying', error, attempts: sql`${outgoingMail.attempts} + 1` })
    .where(eq(outgoingMail.id, id));
}

/** Mail still 'waiting' that was recorded before `before`: its job was never queued, or was lost. */
export async function waitingMailIds(db: Executor, { before, limit = 100 }: { before: Date; limit?: number }) {
  const rows = await db
    .select({ id: outgoingMail.id })
    .from(outgoingMail)
    .where(and(eq(outgoingMail.state, 'waiting'), lt(outgoingMail.createdAt, before), isNotNull(outgoingMail.textBody)))
    .orderBy(outgoingMail.createdAt)
    .limit(limit);
  return rows.map((row) => row.id);
}

export type OutboxHealth = { waiting: number; retrying: number; failed: number };

/** How much mail is waiting for its first try, waiting to be tried again, and failed for good since `failedSince`. */
export async function readOutboxHealth(db: Executor, { failedSince }: { failedSince: Date }): Promise<OutboxHealth> {
  const rows = await db
    .select({ state: outgoingMail.state, count: sql<number>`count(*)::int` })
    .from(outgoingMail)
    .where(and(inArray(outgoingMail.state, ['waiting', 'retrying', 'failed']), sql`(${outgoingMail.state} <> 'failed' or ${gt(outgoingMail.createdAt, failedSince)})`))
    .groupBy(outgoingMail.state);
  const count = (state: string) => rows.find((row) => row.state === state)?.count ?? 0;
  return { waiting: count('waiting'), retrying: count('retrying'), failed: count('failed') };
}

/** The newest mail not sent yet, for the local mailbox page (only this machine reads it). */
export async function listUnsentMail(db: Executor, { limit = 50 }: { limit?: number } = {}) {
  return db
    .select({ id: outgoingMail.id, toAddress: outgoingMail.toAddress, subject: outgoingMail.subject, state: outgoingMail.state, attempts: outgoingMail.attempts, createdAt: outgoingMail.createdAt })
    .from(outgoingMail)
    .where(inArray(outgoingMail.state, ['waiting', 'retrying', 'failed']))
    .orderBy(sql`${outgoingMail.createdAt} desc`)
    .limit(limit);
}
