import { and, count, eq, gt } from 'drizzle-orm';
import type { Executor } from './client';
import { outgoingMail } from './schema';

export async function recordMail(db: Executor, input: { purpose: string; toAddress: string; subject: string; clientAddress?: string | null }) {
  const [row] = await db.insert(outgoingMail).values(input).returning({ id: outgoingMail.id });
  if (!row) throw new Error('outgoing mail was not recorded');
  return row.id;
}

export async function markMail(db: Executor, { id, error, now }: { id: string; error?: string; now: Date }) {
  await db
    .update(outgoingMail)
    .set(error ? { state: 'failed', error } : { state: 'sent', sentAt: now })
    .where(eq(outgoingMail.id, id));
}

/** How many mails of a purpose went to an address, and from a client, since a moment. */
export async function countRecentMail(db: Executor, { purpose, toAddress, clientAddress, since }: { purpose: string; toAddress: string; clientAddress: string | null; since: Date }) {
  const [byAddress] = await db
    .select({ n: count() })
    .from(outgoingMail)
    .where(and(eq(outgoingMail.purpose, purpose), eq(outgoingMail.toAddress, toAddress), gt(outgoingMail.createdAt, since)));
  const [byClient] = clientAddress
    ? await db
        .select({ n: count() })
        .from(outgoingMail)
        .where(and(eq(outgoingMail.purpose, purpose), eq(outgoingMail.clientAddress, clientAddress), gt(outgoingMail.createdAt, since)))
    : [{ n: 0 }];
  return { byAddress: byAddress?.n ?? 0, byClient: byClient?.n ?? 0 };
}
