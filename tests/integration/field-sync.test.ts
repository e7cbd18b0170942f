import { and, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { entryNoticeFacts } from '../../src/db/field-notices.queries';
import { listFlags } from '../../src/db/flags.queries';
import { applyMigrations } from '../../src/db/migrations';
import {
  allowances, checkIns, flags, harvestEntries, harvestTotals, limits, permitEvents, permits, species, users, visits,
} from '../../src/db/schema';
import type { FieldSyncInput } from '../../src/lib/field.schemas';
import { fieldSyncEnvelopeSchema, fieldSyncSchema, parseSyncItems } from '../../src/lib/field.schemas';
import type { Forager } from '../../src/lib/field/types';
import { noticeMail } from '../../src/lib/flag-words';
import { checkIn } from '../../src/server/field/check-in';
import { syncFieldItems } from '../../src/server/field/sync';
import { createThrowawayDatabase, insertClub, insertReferenceParcel, insertUser, migrationsFolder, one, type ThrowawayDatabase } from './throwaway-database';

/**
 * POST /api/field/sync's use case on a real database: items a device recorded offline, decided at
 * the device's instant against the totals in the database when they arrive. Instants are fixed in
 * July 2026, when America/New_York keeps EDT, UTC−4 (REFERENCES §6, 15 U.S.C. 260a): 10:00 EDT is
 * 14:00 UTC, and 23:50 EDT on 15 July is 03:50 UTC on 16 July.
 */
let throwaway: ThrowawayDatabase | undefined;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};

const ids = { owner: '', steward: '', ana: '', ben: '', cy: '', dee: '', eve: '', fay: '', club: '', parcel: '', hidden: '', chanterelle: '', clubPermit: '', cyPermit: '', deePermit: '' };
let ana: Forager;
let ben: Forager;
let cy: Forager;
let dee: Forager;
/** A forager with a permit of her own and no limits: her entries raise no flags. */
let eve: Forager;
let fay: Forager;
/** Inside the REFERENCES §2 ring (−75…−74.99, 45…45.01), far from its edges. */
const inside = { longitude: -74.995, latitude: 45.005, accuracyM: 5, source: 'gps' as const };
const packAsOf = '2026-07-15T12:00:00Z'; // 08:00 EDT
let keys = 0;
const key = (label: string) => `${label}-${++keys}-${crypto.randomUUID()}`;

/** A body as the device sends it, parsed by the endpoint's own schema. */
const body = (foragerId: string, items: unknown[], asOf = packAsOf): FieldSyncInput => fieldSyncSchema.parse({ foragerId, packAsOf: asOf, items });
const entryItem = (recordedAt: string, grams: string, extra: Record<string, unknown> = {}) => ({
  kind: 'entry', idempotencyKey: key('entry'), recordedAt, position: inside, parcelId: ids.parcel, speciesId: ids.chanterelle, method: 'pick',
  quantities: [{ quantity: grams, unit: 'g' }], acknowledgeOver: false, ...extra,
});
const sync = (forager: Forager, items: unknown[], now: string, asOf = packAsOf) => syncFieldItems(db(), { forager, input: body(forager.id, items, asOf), now: new Date(now) });
const entryRow = async (id: string | undefined) => one(db().select().from(harvestEntries).where(eq(harvestEntries.id, id ?? '00000000-0000-0000-0000-000000000000')));

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_field_sync');
  await applyMigrations(throwaway.db, migrationsFolder);
  ids.owner = await insertUser(db(), 'owner@sync.test', 'Olive Owner', ['forager', 'landowner']);
  ids.steward = await insertUser(db(), 'steward@sync.test', 'Stu Steward');
  ids.ana = await insertUser(db(), 'ana@sync.test', 'Ana Member');
  ids.ben = await insertUser(db(), 'ben@sync.test', 'Ben Member');
  ids.cy = await insertUser(db(), 'cy@sync.test', 'Cy Solo');
  ids.dee = await insertUser(db(), 'dee@sync.test', 'Dee Solo');
  ids.eve = await insertUser(db(), 'eve@sync.test', 'Eve Solo');
  ids.fay = await insertUser(db(), 'fay@sync.test', 'Fay Solo');
  ids.club = await insertClub(db(), { slug: 'sync-club', name: 'Sync Club', steward: ids.steward, members: [ids.ana, ids.ben] });
  ana = { id: ids.ana, clubIds: [ids.club] };
  ben = { id: ids.ben, clubIds: [ids.club] };
  cy = { id: ids.cy, clubIds: [] };
  dee = { id: ids.dee, clubIds: [] };
  eve = { id: ids.eve, clubIds: [] };
  fay = { id: ids.fay, clubIds: [] };
  ids.parcel = await insertReferenceParcel(db(), { ownerId: ids.owner, name: 'Sync Hollow' });
  // A draft of the same owner, on which nobody here holds a permit: no forager may know of it.
  ids.hidden = await insertReferenceParcel(db(), { ownerId: ids.owner, name: 'Hidden Draft', status: 'draft' });
  ids.chanterelle = (await one(db().insert(species).values({ slug: 'sync-chanterelle', scientificName: 'Cantharellus cibarius', commonName: 'Chanterelle', kind: 'mushroom', usualUnit: 'g' }).returning())).id;
  const allowance = await one(db().insert(allowances).values({ parcelId: ids.parcel, speciesId: ids.chanterelle, seasons: [{ start: '06-01', end: '09-30' }], methods: ['pick'] }).returning());
  await db().insert(allowances).values({ parcelId: ids.hidden, speciesId: ids.chanterelle, seasons: [{ start: '01-01', end: '12-31' }], methods: ['pick'] });
  ids.clubPermit = (await one(db().insert(permits).values({ parcelId: ids.parcel, holderClubId: ids.club, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' }).returning())).id;
  ids.cyPermit = (await one(db().insert(permits).values({ parcelId: ids.parcel, holderUserId: ids.cy, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' }).returning())).id;
  await db().insert(permits).values({ parcelId: ids.parcel, holderUserId: ids.fay, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' });
  await db().insert(permits).values({ parcelId: ids.parcel, holderUserId: ids.eve, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' });
  ids.deePermit = (await one(db().insert(permits).values({ parcelId: ids.parcel, holderUserId: ids.dee, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' }).returning())).id;
  // The club may take 500 g of chanterelles a season, all members together; Dee 200 g a day.
  await db().insert(limits).values([
    { allowanceId: allowance.id, permitId: ids.clubPermit, scope: 'club-season', quantity: '500', unit: 'g' },
    { allowanceId: allowance.id, permitId: ids.deePermit, scope: 'day', quantity: '200', unit: 'g' },
  ]);
  // Cy's permit was revoked at 11:00 EDT on 15 July (15:00 UTC).
  await db().update(permits).set({ state: 'revoked' }).where(eq(permits.id, ids.cyPermit));
  // Its history, as the app writes it: granted and active at one instant in January, revoked in July.
  await db().insert(permitEvents).values([
    { permitId: ids.cyPermit, fromState: null, toState: 'approved', actorId: ids.owner, at: new Date('2026-01-02T15:00:00Z') },
    { permitId: ids.cyPermit, fromState: 'approved', toState: 'active', actorId: ids.owner, at: new Date('2026-01-02T15:00:00Z') },
    { permitId: ids.cyPermit, fromState: 'active', toState: 'revoked', actorId: ids.owner, reason: 'Logging starts', at: new Date('2026-07-15T15:00:00Z') },
  ]);
});

afterAll(async () => {
  await throwaway?.drop();
});

describe('two members offline, each within on the device, together over the club season', () => {
  let anaEntry = '';
  let benEntry = '';

  beforeAll(async () => {
    // Both downloaded the pack at 08:00 EDT, when the club had taken nothing: 300 g each fits the 500 g on each phone.
    const [a] = await sync(ana, [entryItem('2026-07-15T14:00:00Z', '300')], '2026-07-15T20:00:00Z');
    const [b] = await sync(ben, [entryItem('2026-07-15T15:00:00Z', '300')], '2026-07-15T20:05:00Z');
    anaEntry = a?.entryId ?? '';
    benEntry = b?.entryId ?? '';
  });

  it('given the first to sync, it is recorded: 300 of 500 g is 60 %, under the 80 % threshold, so no flag', async () => {
    const row = await entryRow(anaEntry);
    expect(row).toMatchObject({ breach: false, permitId: ids.clubPermit, clubId: ids.club, countedOn: '2026-07-15' });
    expect(await db().select().from(flags).where(eq(flags.entryId, anaEntry))).toEqual([]);
  });

  it('given the second, it is still recorded, flagged over on sync (not a confirmed breach), and the totals count it as a breach', async () => {
    const row = await entryRow(benEntry);
    expect(row).toMatchObject({ breach: true, acknowledgedOver: false, permitId: ids.clubPermit, deviceRecordedAt: new Date('2026-07-15T15:00:00Z'), recordedAt: new Date('2026-07-15T20:05:00Z') });
    const [flag] = await db().select().from(flags).where(eq(flags.entryId, benEntry));
    expect(flag).toMatchObject({ kind: 'over-on-sync', scopes: ['club-season'], worstState: 'over' });
    expect(flag?.message).toMatch(/^Over on sync: recorded offline within the device's tallies, over once others' entries were counted/);
    // 300 + 300 = 600 g of the club's 500 g; one breach among the totals.
    const [totals] = await db()
      .select({ total: sql<string>`trim_scale(sum(${harvestTotals.total}))::text`, breaches: sql<number>`sum(${harvestTotals.breaches})::int` })
      .from(harvestTotals)
      .where(and(eq(harvestTotals.parcelId, ids.parcel), eq(harvestTotals.clubId, ids.club)));
    expect(totals).toEqual({ total: '600', breaches: 1 });
  });

  it('given the answer the device gets, it says flagged over-on-sync with the sentence the flag keeps', async () => {
    const [again] = await sync(ben, [entryItem('2026-07-15T15:00:00Z', '300')], '2026-07-15T20:06:00Z');
    // A new key: a new entry, over again, and flagged the same way.
    expect(again).toMatchObject({ kind: 'entry', status: 'flagged', replayed: false, flag: { kind: 'over-on-sync' } });
    expect(again?.flag?.message).toContain('over once others');
  });

  it('given the landowner and the club steward, both are told in words of their own, once per entry and address', async () => {
    const facts = await entryNoticeFacts(db(), { entryId: benEntry });
    expect(facts?.recipients.sort()).toEqual(['owner@sync.test', 'steward@sync.test']);
    const mail = facts ? noticeMail(facts, 'https://tallywood.example') : null;
    expect(mail).toMatchObject({ purpose: 'over-on-sync', heading: 'Limit went over on sync on Sync Hollow', url: `https://tallywood.example/land/${ids.parcel}/tallies` });
    expect(mail?.paragraphs[0]).toContain('Ben Member recorded 300 g of Chanterelle');
    expect(mail?.dedupeKey('owner@sync.test')).toBe(`over-on-sync:${benEntry}:owner@sync.test`);
  });

  it('given the flags lists, the landowner and the club see the new kind with its sentence', async () => {
    const owners = await listFlags(db(), { ownerId: ids.owner, parcelId: ids.parcel });
    const club = await listFlags(db(), { clubId: ids.club });
    for (const list of [owners, club]) expect(list.find((f) => f.entry.id === benEntry)).toMatchObject({ kind: 'over-on-sync', foragerName: 'Ben Member' });
  });
});

describe('an entry taken after its permit was revoked', () => {
  it('given one recorded after the revocation at 11:00 EDT, it is recorded, flagged off permit with the reason, and the landowner alone is told', async () => {
    const [result] = await sync(cy, [entryItem('2026-07-15T16:00:00Z', '50')], '2026-07-15T21:00:00Z');
    expect(result).toMatchObject({ status: 'flagged', flag: { kind: 'off-permit' }, replayed: false });
    expect(result?.flag?.message).toMatch(/^Off permit: .*was revoked/);
    const row = await entryRow(result?.entryId);
    expect(row).toMatchObject({ permitId: ids.cyPermit, breach: false, countedOn: '2026-07-15' });
    const facts = await entryNoticeFacts(db(), { entryId: row.id });
    expect(facts?.recipients).toEqual(['owner@sync.test']);
    const mail = facts ? noticeMail(facts, 'https://tallywood.example') : null;
    expect(mail).toMatchObject({ purpose: 'off-permit', heading: 'Harvest recorded off permit on Sync Hollow' });
    expect(mail?.paragraphs[1]).toMatch(/^What their phone was told: ".*was revoked/);
  });

  it('given one recorded at 10:00 EDT, before the revocation, and sent after it, it is recorded as clear under the permit', async () => {
    const [result] = await sync(cy, [entryItem('2026-07-15T14:00:00Z', '40')], '2026-07-15T21:00:00Z');
    expect(result).toMatchObject({ status: 'recorded', replayed: false });
    expect(result?.flag).toBeUndefined();
    expect(await entryRow(result?.entryId)).toMatchObject({ permitId: ids.cyPermit, breach: false });
  });
});

describe('an entry taken before its permit was granted', () => {
  it('given a permit granted at 11:00 EDT and an entry recorded at 10:00, it is recorded off permit', async () => {
    const gus = await one(db().insert(users).values({ email: 'gus@sync.test', name: 'Gus Late' }).returning());
    const permit = await one(db().insert(permits).values({ parcelId: ids.parcel, holderUserId: gus.id, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' }).returning());
    await db().insert(permitEvents).values([
      { permitId: permit.id, fromState: null, toState: 'approved', actorId: ids.owner, at: new Date('2026-07-15T15:00:00Z') },
      { permitId: permit.id, fromState: 'approved', toState: 'active', actorId: ids.owner, at: new Date('2026-07-15T15:00:00Z') },
    ]);
    const [before] = await sync({ id: gus.id, clubIds: [] }, [entryItem('2026-07-15T14:00:00Z', '5')], '2026-07-15T21:00:00Z');
    expect(before).toMatchObject({ status: 'flagged', flag: { kind: 'off-permit' } });
    const [after] = await sync({ id: gus.id, clubIds: [] }, [entryItem('2026-07-15T16:00:00Z', '5')], '2026-07-15T21:00:00Z');
    expect(after).toMatchObject({ status: 'recorded' });
  });
});

describe('over with the going over confirmed on the device', () => {
  it("given Dee's 250 g against her 200 g a day and acknowledgeOver, it is an ordinary breach", async () => {
    const [result] = await sync(dee, [entryItem('2026-07-15T14:00:00Z', '250', { acknowledgeOver: true })], '2026-07-15T20:00:00Z');
    expect(result).toMatchObject({ status: 'flagged', flag: { kind: 'breach' } });
    expect(await entryRow(result?.entryId)).toMatchObject({ breach: true, acknowledgedOver: true });
  });
});

describe('the same batch sent twice', () => {
  it('given a check-in and an entry sent again after a lost answer, it answers the first results, replayed, and records each once', async () => {
    const items = [
      { kind: 'check-in', idempotencyKey: key('check-in'), recordedAt: '2026-07-20T14:00:00Z', position: inside },
      entryItem('2026-07-20T14:10:00Z', '20'),
    ];
    const first = await sync(eve, items, '2026-07-20T18:00:00Z', '2026-07-20T11:00:00Z');
    const second = await sync(eve, items, '2026-07-20T18:01:00Z', '2026-07-20T11:00:00Z');
    expect(first.map((r) => [r.kind, r.status, r.replayed])).toEqual([['check-in', 'recorded', false], ['entry', 'recorded', false]]);
    expect(second.map((r) => [r.kind, r.status, r.replayed])).toEqual([['check-in', 'recorded', true], ['entry', 'recorded', true]]);
    expect(second.map((r) => r.checkInId ?? r.entryId)).toEqual(first.map((r) => r.checkInId ?? r.entryId));
    const keyOf = (i: number) => (items[i] as { idempotencyKey: string }).idempotencyKey;
    expect(await db().select({ id: checkIns.id }).from(checkIns).where(eq(checkIns.idempotencyKey, keyOf(0)))).toHaveLength(1);
    expect(await db().select({ id: harvestEntries.id }).from(harvestEntries).where(eq(harvestEntries.idempotencyKey, keyOf(1)))).toHaveLength(1);
    // The check-in opened the visit and the entry counts in it.
    const [logged] = await db().select().from(checkIns).where(eq(checkIns.idempotencyKey, keyOf(0)));
    expect((await entryRow(first[1]?.entryId)).visitId).toBe(logged?.visitId);
  });

  it('given the same key with another quantity, it is refused and the first entry stands', async () => {
    const item = entryItem('2026-07-21T14:00:00Z', '10');
    const [first] = await sync(eve, [item], '2026-07-21T18:00:00Z', '2026-07-21T11:00:00Z');
    const [other] = await sync(eve, [{ ...item, quantities: [{ quantity: '99', unit: 'g' }] }], '2026-07-21T18:01:00Z', '2026-07-21T11:00:00Z');
    expect(other).toMatchObject({ status: 'refused', replayed: false });
    expect(other?.message).toMatch(/already used this idempotency key/);
    expect(await db().select({ id: harvestEntries.id }).from(harvestEntries).where(eq(harvestEntries.idempotencyKey, item.idempotencyKey))).toEqual([{ id: first?.entryId }]);
  });
});

describe('the local day an entry counts on', () => {
  it('given an entry at 23:50 EDT on 15 July sent at 01:00 EDT on the 16th, it counts on the 15th, in a visit of the 15th ended at that day’s end', async () => {
    // 23:50 EDT = 03:50 UTC on the 16th; 01:00 EDT = 05:00 UTC.
    const [result] = await sync(eve, [entryItem('2026-07-16T03:50:00Z', '10')], '2026-07-16T05:00:00Z');
    const row = await entryRow(result?.entryId);
    expect(row).toMatchObject({ localDate: '2026-07-15', countedOn: '2026-07-15' });
    const visit = await one(db().select().from(visits).where(eq(visits.id, row.visitId ?? '')));
    // Midnight EDT at the end of 15 July is 04:00 UTC on the 16th.
    expect(visit).toMatchObject({ localDate: '2026-07-15', endedAt: new Date('2026-07-16T04:00:00Z'), endedBy: 'end-of-day' });
  });
});

describe('device clocks that cannot be believed, and things the forager could never see', () => {
  const now = '2026-07-22T18:00:00Z';
  const count = async (k: string) =>
    (await db().select({ id: harvestEntries.id }).from(harvestEntries).where(eq(harvestEntries.idempotencyKey, k))).length +
    (await db().select({ id: checkIns.id }).from(checkIns).where(eq(checkIns.idempotencyKey, k))).length;

  it('given an entry 10 minutes ahead of the server, it is refused with what to do, and nothing is written', async () => {
    const item = entryItem('2026-07-22T18:10:00Z', '10');
    const [result] = await sync(eve, [item], now, '2026-07-22T11:00:00Z');
    expect(result).toEqual({ idempotencyKey: item.idempotencyKey, kind: 'entry', status: 'refused', replayed: false, message: "Your phone's clock is ahead of the real time by about 10 minutes; set it to automatic time and send again." });
    expect(await count(item.idempotencyKey)).toBe(0);
  });

  it('given a check-in recorded before the field pack was downloaded, it is refused with the message, and nothing is written', async () => {
    const item = { kind: 'check-in', idempotencyKey: key('early'), recordedAt: '2026-07-22T10:00:00Z', position: inside };
    const [result] = await sync(eve, [item], now, '2026-07-22T11:00:00Z');
    expect(result).toMatchObject({ kind: 'check-in', status: 'refused', replayed: false });
    expect(result?.message).toMatch(/about 60 minutes before your field pack was downloaded/);
    expect(await count(item.idempotencyKey)).toBe(0);
  });

  it('given an entry 1 minute ahead (within the 2 minutes a send takes), it is recorded', async () => {
    const [result] = await sync(eve, [entryItem('2026-07-22T18:01:00Z', '5')], now, '2026-07-22T11:00:00Z');
    expect(result?.status).toBe('recorded');
  });

  it('given a parcel the forager may not know of, it is refused as not found, and nothing is written', async () => {
    const item = entryItem('2026-07-22T14:00:00Z', '10', { parcelId: ids.hidden });
    const [result] = await sync(eve, [item], now, '2026-07-22T11:00:00Z');
    expect(result).toMatchObject({ status: 'refused' });
    expect(result?.message).toMatch(/not found among those open to you/);
    expect(await count(item.idempotencyKey)).toBe(0);
  });

  it('given a malformed item among good ones, it alone is refused, saying what is wrong, and nothing of it is written', async () => {
    const bad = entryItem('2026-07-22T14:05:00Z', '1', { method: 'scrape' });
    const good = entryItem('2026-07-22T14:10:00Z', '1');
    const { packAsOf: asOf, items } = fieldSyncEnvelopeSchema.parse({ foragerId: eve.id, packAsOf: '2026-07-22T11:00:00Z', items: [bad, good] });
    const results = await syncFieldItems(db(), { forager: eve, input: { packAsOf: asOf, items: parseSyncItems(items) }, now: new Date(now) });
    expect(results.map((r) => [r.idempotencyKey, r.status])).toEqual([[bad.idempotencyKey, 'refused'], [good.idempotencyKey, 'recorded']]);
    expect(results[0]?.message).toBe('This was not saved (method): Choose how you took it.');
    expect(await count(bad.idempotencyKey)).toBe(0);
  });

  it('given a refused item among good ones, the others are still recorded, in order', async () => {
    const items = [entryItem('2026-07-22T14:00:00Z', '1'), entryItem('2026-07-22T19:00:00Z', '1'), entryItem('2026-07-22T14:30:00Z', '1')];
    const results = await sync(eve, items, now, '2026-07-22T11:00:00Z');
    expect(results.map((r) => [r.idempotencyKey, r.status])).toEqual(items.map((i, n) => [i.idempotencyKey, n === 1 ? 'refused' : 'recorded']));
  });
});

describe('where a position came from', () => {
  it("given a synced check-in tapped on the map, it stores 'tap' with the device's instant and the server's", async () => {
    const item = { kind: 'check-in', idempotencyKey: key('tap'), recordedAt: '2026-07-23T14:00:00Z', position: { ...inside, source: 'tap' } };
    const [result] = await sync(eve, [item], '2026-07-23T18:00:00Z', '2026-07-23T11:00:00Z');
    const row = await one(db().select().from(checkIns).where(eq(checkIns.id, result?.checkInId ?? '')));
    expect(row).toMatchObject({ positionSource: 'tap', verdict: 'clear', at: new Date('2026-07-23T14:00:00Z'), deviceRecordedAt: new Date('2026-07-23T14:00:00Z'), receivedAt: new Date('2026-07-23T18:00:00Z') });
  });

  it("given an online check-in with source 'tap', it stores 'tap'; without a source, 'gps'", async () => {
    const tapped = await checkIn(db(), { forager: dee, position: [inside.longitude, inside.latitude], accuracyM: 5, source: 'tap', now: new Date('2026-07-24T14:00:00Z') });
    const fixed = await checkIn(db(), { forager: dee, position: [inside.longitude, inside.latitude], accuracyM: 5, now: new Date('2026-07-24T14:05:00Z') });
    expect([tapped.verdict, fixed.verdict]).toEqual(['clear', 'clear']);
    const rows = await db().select({ source: checkIns.positionSource, device: checkIns.deviceRecordedAt }).from(checkIns)
      .where(and(eq(checkIns.foragerId, ids.dee), sql`${checkIns.at} >= '2026-07-24T00:00:00Z'`)).orderBy(checkIns.at);
    expect(rows).toEqual([{ source: 'tap', device: null }, { source: 'gps', device: null }]);
  });
});

describe('the visit an entry synced on its own day joins', () => {
  const visitOf = async (entryId: string | undefined) => one(db().select().from(visits).where(eq(visits.id, (await entryRow(entryId)).visitId ?? '')));

  it('given a visit checked into online at 09:00 EDT and still open, an entry recorded at 10:00 joins it and leaves it open', async () => {
    const online = await checkIn(db(), { forager: fay, position: [inside.longitude, inside.latitude], accuracyM: 5, now: new Date('2026-07-25T13:00:00Z') });
    expect(online.verdict).toBe('clear');
    const [result] = await sync(fay, [entryItem('2026-07-25T14:00:00Z', '5')], '2026-07-25T15:00:00Z', '2026-07-25T11:00:00Z');
    const visit = await visitOf(result?.entryId);
    expect(visit).toMatchObject({ id: online.visitId, endedAt: null });
  });

  it('given an entry recorded at 08:00 EDT, before that visit began, it opens a visit of its own, ended where the next began, and the open one stays open', async () => {
    const [result] = await sync(fay, [entryItem('2026-07-25T12:00:00Z', '5')], '2026-07-25T15:05:00Z', '2026-07-25T11:00:00Z');
    const visit = await visitOf(result?.entryId);
    expect(visit).toMatchObject({ localDate: '2026-07-25', startedAt: new Date('2026-07-25T12:00:00Z'), endedAt: new Date('2026-07-25T13:00:00Z'), endedBy: 'check-out' });
    const open = await db().select({ id: visits.id }).from(visits).where(and(eq(visits.foragerId, ids.fay), sql`${visits.endedAt} is null`));
    expect(open).toHaveLength(1);
    expect(open[0]?.id).not.toBe(visit.id);
  });
});
