import type { QueuedCheckIn, QueuedEntry } from '../../lib/field/pack';
import { sendJson } from '../api-client';
import { queuedRecords, updateQueued, type QueuedRecord } from './offline-store';

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

let sending: Promise<SendOutcome> | null = null;

export type SendOutcome = { sent: number; flagged: number; refused: number; problem: string | null };

/**
 * Sends every record still waiting, oldest first, in batches of the pack each was decided with.
 * A record is marked only when the server's answer for it arrives: a connection lost mid-request
 * leaves it waiting, and sending it again is safe (each carries its idempotency key, so the server
 * records it once and answers the same). One send at a time on a page.
 */
export function sendWaiting(userId: string): Promise<SendOutcome> {
  sending ??= send(userId).finally(() => {
    sending = null;
  });
  return sending;
}

async function send(userId: string): Promise<SendOutcome> {
  const outcome: SendOutcome = { sent: 0, flagged: 0, refused: 0, problem: null };
  const waiting = (await queuedRecords(userId)).filter((r) => r.state === 'waiting');
  const byPack = new Map<string, QueuedRecord[]>();
  for (const record of waiting) byPack.set(record.packAsOf, [...(byPack.get(record.packAsOf) ?? []), record]);
  for (const [packAsOf, records] of byPack) {
    for (let i = 0; i < records.length; i += batchSize) {
      const batch = records.slice(i, i + batchSize);
      const result = await sendJson('POST', '/api/field/sync', { packAsOf, items: batch.map(itemOf) }, { timeoutMs: 20_000 });
      if (!result.ok) {
        outcome.problem = result.error.message;
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
