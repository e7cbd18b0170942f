import { eq, sql } from 'drizzle-orm';
import pino from 'pino';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Tx } from '../../src/db/client';
import { applyMigrations } from '../../src/db/migrations';
import { allowances, harvestEntries, limits, outgoingMail, permits, species } from '../../src/db/schema';
import { fieldSyncSchema } from '../../src/lib/field.schemas';
import type { Forager } from '../../src/lib/field/types';
import { entryNoticeMails } from '../../src/server/entry-notices';
import { checkIn } from '../../src/server/field/check-in';
import { recordHarvest } from '../../src/server/field/harvest';
import { syncFieldItems } from '../../src/server/field/sync';
import { queueMail } from '../../src/server/outbox';
import { createThrowawayDatabase, insertClub, insertReferenceParcel, insertUser, migrationsFolder, one, type ThrowawayDatabase } from './throwaway-database';

/*
 * The mail that tells a landowner (and a club permit's stewards) of a breach is written in the
 * transaction that records the entry: both exist or neither does, and an entry sent again is told once.
 * The endpoints pass `noticeBreach` as the use cases' `afterWrite`; it reads the server's settings
 * (astro:env), so here the same hook is made of its two parts, entryNoticeMails and queueMail.
 * Instants are fixed in July 2026, when America/New_York keeps EDT, UTC−4 (REFERENCES §6): 10:00 EDT is 14:00 UTC.
 */
let throwaway: ThrowawayDatabase | undefined;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};
const log = pino({ level: 'silent' });
const from = 'Tallywood <mail@tallywood.example>';
const origin = 'https://tallywood.example';
const ids = { owner: '', steward: '', ana: '', ben: '', club: '', parcel: '', chanterelle: '' };
let ana: Forager;
let ben: Forager;
/** Inside the REFERENCES §2 ring (−75…−74.99, 45…45.01), far from its edges. */
const inside = { longitude: -74.995, latitude: 45.005, accuracyM: 5, source: 'gps' as const };

/** What the endpoints do after an entry is written: its notice mails, in its transaction. */
const tellInTx = async (tx: Tx, entry: { id: string }) => {
  for (const mail of await entryNoticeMails(tx, { entryId: entry.id, origin })) await queueMail(tx, mail, { from, log });
};

class HookFailed extends Error {}

const mailsAbout = (entryId: string) =>
  db().select({ to: outgoingMail.toAddress, purpose: outgoingMail.purpose, dedupeKey: outgoingMail.dedupeKey }).from(outgoingMail).where(sql`${outgoingMail.dedupeKey} like ${`%:${entryId}:%`}`).orderBy(outgoingMail.toAddress);
const mailCount = async () => (await db().execute<{ n: number }>(sql`select count(*)::int as n from outgoing_mail`))[0]?.n ?? 0;
/** The transaction that wrote a row: rows inserted by one transaction share its id (PostgreSQL docs, "System Columns": xmin). */
const writtenBy = async (table: 'harvest_entries' | 'outgoing_mail', where: ReturnType<typeof sql>) =>
  (await db().execute<{ xmin: string }>(sql`select xmin::text as xmin from ${sql.identifier(table)} where ${where}`)).map((r) => r.xmin);

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_entry_notices');
  await applyMigrations(throwaway.db, migrationsFolder);
  ids.owner = await insertUser(db(), 'owner@notices.test', 'Olive Owner', ['forager', 'landowner']);
  ids.steward = await insertUser(db(), 'steward@notices.test', 'Stu Steward');
  ids.ana = await insertUser(db(), 'ana@notices.test', 'Ana Member');
  ids.ben = await insertUser(db(), 'ben@notices.test', 'Ben Member');
  ids.club = await insertClub(db(), { slug: 'notices-club', name: 'Notices Club', steward: ids.steward, members: [ids.ana, ids.ben] });
  ana = { id: ids.ana, clubIds: [ids.club] };
  ben = { id: ids.ben, clubIds: [ids.club] };
  ids.parcel = await insertReferenceParcel(db(), { ownerId: ids.owner, name: 'Notice Hollow' });
  ids.chanterelle = (await one(db().insert(species).values({ slug: 'notices-chanterelle', scientificName: 'Cantharellus cibarius', commonName: 'Chanterelle', kind: 'mushroom', usualUnit: 'g' }).returning())).id;
  const allowance = await one(db().insert(allowances).values({ parcelId: ids.parcel, speciesId: ids.chanterelle, seasons: [{ start: '06-01', end: '09-30' }], methods: ['pick'] }).returning());
  const clubPermit = await one(db().insert(permits).values({ parcelId: ids.parcel, holderClubId: ids.club, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' }).returning());
  // The club may take 500 g of chanterelles a season, all members together.
  await db().insert(limits).values({ allowanceId: allowance.id, permitId: clubPermit.id, scope: 'club-season', quantity: '500', unit: 'g' });
});

afterAll(async () => {
  await throwaway?.drop();
});

describe('a breach recorded online', () => {
  let visitId = '';
  const now = new Date('2026-07-15T14:05:00Z');
  const harvest = (grams: string, idempotencyKey = crypto.randomUUID()) => ({ idempotencyKey, visitId, speciesId: ids.chanterelle, method: 'pick' as const, quantities: [{ quantity: grams, unit: 'g' as const }], acknowledgeOver: true });

  beforeAll(async () => {
    const visit = await checkIn(db(), { forager: ana, position: [inside.longitude, inside.latitude], accuracyM: 5, now: new Date('2026-07-15T14:00:00Z') });
    visitId = visit.visitId ?? '';
  });

  it('given 600 g confirmed over the club\'s 500 g season, it writes one mail to the landowner and one to the steward, in the entry\'s own transaction', async () => {
    const { entry } = await recordHarvest(db(), { forager: ana, input: harvest('600'), now, afterWrite: tellInTx });
    expect(entry.breach).toBe(true);
    // The landowner and the club permit's active stewards are told (DEVELOPERS.md, "Syncing…": breaches are told by e-mail at once).
    expect(await mailsAbout(entry.id)).toEqual([
      { to: 'owner@notices.test', purpose: 'breach', dedupeKey: `breach:${entry.id}:owner@notices.test` },
      { to: 'steward@notices.test', purpose: 'breach', dedupeKey: `breach:${entry.id}:steward@notices.test` },
    ]);
    const [entryTx] = await writtenBy('harvest_entries', sql`id = ${entry.id}::uuid`);
    expect(await writtenBy('outgoing_mail', sql`dedupe_key like ${`%:${entry.id}:%`}`)).toEqual([entryTx, entryTx]);
  });

  it('given the recording transaction fails after the entry and its mail are written, neither the entry nor any mail is left', async () => {
    const key = crypto.randomUUID();
    const before = await mailCount();
    let told = 0;
    const failing = async (tx: Tx, entry: { id: string }) => {
      await tellInTx(tx, entry);
      told = (await tx.execute<{ n: number }>(sql`select count(*)::int as n from outgoing_mail where dedupe_key like ${`%:${entry.id}:%`}`))[0]?.n ?? 0;
      throw new HookFailed();
    };
    await expect(recordHarvest(db(), { forager: ana, input: harvest('100', key), now, afterWrite: failing })).rejects.toBeInstanceOf(HookFailed);
    expect(told).toBe(2); // both were written inside, then undone with the entry
    expect(await db().select().from(harvestEntries).where(eq(harvestEntries.idempotencyKey, key))).toEqual([]);
    expect(await mailCount()).toBe(before);
  });

  it('given the same entry sent again with its key after a lost answer, it is answered as a replay and nobody is mailed twice', async () => {
    const input = harvest('50');
    const first = await recordHarvest(db(), { forager: ana, input, now, afterWrite: tellInTx });
    const again = await recordHarvest(db(), { forager: ana, input, now, afterWrite: tellInTx });
    expect(again).toMatchObject({ replayed: true, entry: { id: first.entry.id } });
    expect((await mailsAbout(first.entry.id)).map((m) => m.to)).toEqual(['owner@notices.test', 'steward@notices.test']);
  });
});

describe('a breach synced from a device', () => {
  const item = {
    kind: 'entry', idempotencyKey: crypto.randomUUID(), recordedAt: '2026-07-15T15:00:00Z', position: inside, method: 'pick',
    quantities: [{ quantity: '80', unit: 'g' }], acknowledgeOver: true,
  };
  const sync = () =>
    syncFieldItems(db(), {
      forager: ben,
      input: fieldSyncSchema.parse({ foragerId: ids.ben, packAsOf: '2026-07-15T12:00:00Z', items: [{ ...item, parcelId: ids.parcel, speciesId: ids.chanterelle }] }),
      now: new Date('2026-07-15T20:00:00Z'),
      afterWrite: tellInTx,
    });

  it('given the same batch sent twice (the service worker and the page at once, or a lost answer), each recipient is mailed once, in the entry\'s transaction', async () => {
    const [first] = await sync();
    const [second] = await sync();
    expect(first).toMatchObject({ status: 'flagged', flag: { kind: 'breach' }, replayed: false });
    expect(second).toMatchObject({ entryId: first?.entryId, replayed: true });
    const entryId = first?.entryId ?? '';
    expect((await mailsAbout(entryId)).map((m) => m.to)).toEqual(['owner@notices.test', 'steward@notices.test']);
    const [entryTx] = await writtenBy('harvest_entries', sql`id = ${entryId}::uuid`);
    expect(await writtenBy('outgoing_mail', sql`dedupe_key like ${`%:${entryId}:%`}`)).toEqual([entryTx, entryTx]);
  });
});
