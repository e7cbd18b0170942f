import { openDB, type DBSchema, type IDBPDatabase } from 'idb';
import type { CountedEntry, FieldPack, QueuedCheckIn, QueuedEntry } from '../../lib/field/pack';

/**
 * What the phone keeps for the field, in IndexedDB (through idb): the latest field pack, and every
 * check-in and entry made on the device until the server has answered for it. A queued record is
 * never deleted by sending it; it stays, with its state, as the device's own log of the day.
 */

/** What the service worker tells open pages after a background send, so they show the new states. */
export const fieldSentMessage = 'tallywood-field-sent';

export type QueueState = 'waiting' | 'sent' | 'flagged' | 'refused';

export type QueuedRecord = (QueuedEntry | QueuedCheckIn) & {
  /** The pack the device decided with (its `asOf`), which the server checks the device time against. */
  packAsOf: string;
  state: QueueState;
  /** When the server's answer arrived (ISO). */
  answeredAt?: string;
  /** The server's words for a flag or a refusal, kept on the device. */
  message?: string;
  flagKind?: string;
  /** For an entry: what the device counts of it until a pack made after its answer includes it. */
  counted?: CountedEntry;
  /** Words for the list: "Chaga, 200 g on Alder Bottom". */
  summary: string;
};

interface FieldDb extends DBSchema {
  pack: { key: string; value: { key: 'current'; userId: string; pack: FieldPack; savedAt: string } };
  queue: { key: string; value: QueuedRecord & { userId: string }; indexes: { byUser: string } };
}

let opened: Promise<IDBPDatabase<FieldDb>> | null = null;

function database() {
  opened ??= openDB<FieldDb>('tallywood-field', 1, {
    upgrade(db) {
      db.createObjectStore('pack', { keyPath: 'key' });
      const queue = db.createObjectStore('queue', { keyPath: 'idempotencyKey' });
      queue.createIndex('byUser', 'userId');
    },
  });
  return opened;
}

/** The pack saved on this device for this person, if any (another person's pack on a shared phone is not theirs). */
export async function savedPack(userId: string): Promise<FieldPack | null> {
  const row = await (await database()).get('pack', 'current');
  return row && row.userId === userId ? row.pack : null;
}

export async function savePack(userId: string, pack: FieldPack) {
  await (await database()).put('pack', { key: 'current', userId, pack, savedAt: new Date().toISOString() });
}

/** This person's queued records, oldest first. */
export async function queuedRecords(userId: string): Promise<QueuedRecord[]> {
  const rows = await (await database()).getAllFromIndex('queue', 'byUser', userId);
  return rows.sort((a, b) => a.recordedAt.localeCompare(b.recordedAt));
}

/** Keeps a record made on the device; it is written before anything else happens, so closing the tab loses nothing. */
export async function enqueue(userId: string, record: QueuedRecord) {
  await (await database()).put('queue', { ...record, userId });
}

/** Whose records on this device still wait for the server (the service worker sends each person's under their own sign-in). */
export async function foragersWithWaiting(): Promise<string[]> {
  const rows = await (await database()).getAll('queue');
  return [...new Set(rows.filter((r) => r.state === 'waiting').map((r) => r.userId))];
}

/** What the server's answer changes on a queued record. */
export type QueueAnswer = Pick<QueuedRecord, 'state' | 'answeredAt' | 'message' | 'flagKind'>;

export async function updateQueued(userId: string, idempotencyKey: string, change: QueueAnswer) {
  const db = await database();
  const tx = db.transaction('queue', 'readwrite');
  const row = await tx.store.get(idempotencyKey);
  if (row && row.userId === userId) await tx.store.put({ ...row, ...change });
  await tx.done;
}
