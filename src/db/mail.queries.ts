import { eq } from 'drizzle-orm';
import type { Executor } from './client';
import { outgoingMail } from './schema';

/**
 * Records a mail about to be sent; its id. With a `dedupeKey` already recorded, nothing is recorded
 * and the answer is null: that mail went (or is going) already.
 */
export async function recordMail(db: Executor, input: { purpose: string; toAddress: string; subject: string; clientAddress?: string | null; dedupeKey?: string | null }) {
  const [row] = await db.insert(outgoingMail).values(input).onConflictDoNothing({ target: outgoingMail.dedupeKey }).returning({ id: outgoingMail.id });
  if (!row && !input.dedupeKey) throw new Error('outgoing mail was not recorded');
  return row?.id ?? null;
}

export async function markMail(db: Executor, { id, error, now }: { id: string; error?: string; now: Date }) {
  await db
    .update(outgoingMail)
    // A failed mail gives up its dedupe key, so asking again sends it.
    .set(error ? { state: 'failed', error, dedupeKey: null } : { state: 'sent', sentAt: now })
    .where(eq(outgoingMail.id, id));
}
