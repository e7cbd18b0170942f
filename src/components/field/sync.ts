import type { QueuedCheckIn, QueuedEntry } from '../../lib/field/pack';
import { sendJson } from '../api-client';
import { enqueue, foragersWithWaiting, queuedRecords, updateQueued, type QueuedRecord } from './offline-store';

/** The server's answer for one queued record (POST /api/field/sync). */
type SyncResult = {
  idempotencyKey: string;
  status: 'recorded' | 'flagged' | 'refused';
  flag?: { kind: string; message: string };
  message?: string;
};

/** At most this many records go in one request (the endpoint's own limit). */
const batchSize = 50;

const itemOf = (record: QueuedRecord): QueuedEntry | QueuedCheckIn =>
  record.kind === 'entry'
    ? { kind: 'entry', idempotencyKey: record.idempotencyKey, recordedAt: record.recordedAt, position: record.position, parcelId: record.parcelId, speciesId: record.speciesId, method: record.method, quantities: record.quantities, acknowledgeOver: record.acknowledgeOver }
    : { kind: 'check-in', idempotencyKey: record.idempotencyKey, recordedAt: record.recordedAt, position: record.position };

/** The send under way for each person (one at a time each). */
const sending = new Map<string, Promise<SendOutcome>>();

/**
 * What one send did. `offline`: the connection failed, so trying later may work; any other problem
 * is the server's answer (signed out, signed in as someone else) and waits for the person.
 */
export type SendOutcome = { sent: number; flagged: number; refused: number; problem: string | null; offline: boolean };

/** The tag of the background sync the service worker answers (src/sw.ts). */
export const backgroundSyncTag = 'tallywood-field-sync';

/**
 * Keeps a record made on the device, then asks the browser to send what waits as soon as it has a
 * connection, even with Tallywood closed (Background Sync, where the browser has it; elsewhere the
 * record goes on reconnect, on opening the app, or with "Send now").
 */
export async function keepForSending(userId: string, record: QueuedRecord) {
  await enqueue(userId, record);
  try {
    const registration = await Promise.race([navigator.serviceWorker?.ready, new Promise<undefined>((resolve) => setTimeout(resolve, 2000))]);
    if (registration && 'sync' in registration) await (registration.sync as { register(tag: string): Promise<void> }).register(backgroundSyncTag);
  } catch {
    // No worker or no permission: the other ways of sending still apply.
  }
}

/**
 * Sends every person's waiting records (the service worker's background sync). Each batch names its
 * forager, and the server refuses a batch that is not the signed-in person's, so on a shared phone
 * nobody's records are sent as somebody else's.
 */
export async function sendAllWaiting(): Promise<SendOutcome[]> {
  const outcomes: SendOutcome[] = [];
  for (const userId of await foragersWithWaiting()) outcomes.push(await sendWaiting(userId));
  return outcomes;
}

/**
 * Sends every record still waiting, oldest first, in batches of the pack each was decided with.
 * A record is marked only when the server's answer for it arrives: a connection lost mid-request
 * leaves it waiting, and sending it again is safe (each carries its idempotency key, so the server
 * records it once and answers the same). One send at a time for each person.
 */
export function sendWaiting(userId: string): Promise<SendOutcome> {
  const under = sending.get(userId) ?? send(userId).finally(() => sending.delete(userId));
  sending.set(userId, under);
  return under;
}

async function send(userId: string): Promise<SendOutcome> {
  const outcome: SendOutcome = { sent: 0, flagged: 0, refused: 0, problem: null, offline: false };
  const waiting = (await queuedRecords(userId)).filter((r) => r.state === 'waiting');
  const byPack = new Map<string, QueuedRecord[]>();
  for (const record of waiting) byPack.set(record.packAsOf, [...(byPack.get(record.packAsOf) ?? []), record]);
  for (const [packAsOf, records] of byPack) {
    for (let i = 0; i < records.length; i += batchSize) {
      const batch = records.slice(i, i + batchSize);
      const result = await sendJson('POST', '/api/field/sync', { foragerId: userId, packAsOf, items: batch.map(itemOf) }, { timeoutMs: 20_000 });
      if (!result.ok) {
        outcome.problem = result.error.message;
        outcome.offline = result.error.code === 'offline';
        return outcome;
      }
      const answeredAt = new Date().toISOString();
      for (const answer of (result.data as { results: SyncResult[] }).results) {
        if (answer.status === 'recorded') outcome.sent += 1;
        else if (answer.status === 'flagged') outcome.flagged += 1;
        else outcome.refused += 1;
        await updateQueued(userId, answer.idempotencyKey, {
          state: answer.status === 'recorded' ? 'sent' : answer.status,
          answeredAt,
          message: answer.flag?.message ?? answer.message,
          flagKind: answer.flag?.kind,
        });
      }
    }
  }
  return outcome;
}
