import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { findPermitCard, findPermitStanding } from '../../src/db/permit-cards.queries';
import { applyMigrations } from '../../src/db/migrations';
import { localDate } from '../../src/lib/local-time';
import { allowances, clubs, limits, parcels, permitEvents, permits, species } from '../../src/db/schema';
import { createThrowawayDatabase, insertUser, migrationsFolder, one, referenceBoundary, type ThrowawayDatabase } from './throwaway-database';

/*
 * Who may open a permit card (its holder, a member of the holding club, the parcel's landowner; no one
 * else), what limits it reads (the parcel's and this permit's own, never another permit's), and the
 * revocation day a card's check reports.
 */
let throwaway: ThrowawayDatabase | undefined;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};

const ids = { ben: '', fay: '', gil: '', hal: '', club: '', personal: '', clubPermit: '', other: '' };

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_cards');
  await applyMigrations(throwaway.db, migrationsFolder);
  ids.ben = await insertUser(db(), 'ben@cards.test', 'Ben Birch', ['landowner']);
  ids.fay = await insertUser(db(), 'fay@cards.test', 'Fay Forager');
  ids.gil = await insertUser(db(), 'gil@cards.test', 'Gil Member');
  ids.hal = await insertUser(db(), 'hal@cards.test', 'Hal Outsider', ['forager', 'landowner']);
  ids.club = (await one(db().insert(clubs).values({ slug: 'cards-club', name: 'Card Club' }).returning({ id: clubs.id }))).id;
  const parcelId = (await one(db().insert(parcels).values({ ownerId: ids.ben, name: 'Birch Hollow', status: 'listed', boundary: referenceBoundary as never, areaM2: 1, timeZone: 'America/New_York' }).returning({ id: parcels.id }))).id;
  const speciesId = (await one(db().insert(species).values({ slug: 'cards-chaga', scientificName: 'Inonotus obliquus', commonName: 'Chaga', kind: 'mushroom', usualUnit: 'g' }).returning({ id: species.id }))).id;
  const allowanceId = (await one(db().insert(allowances).values({ parcelId, speciesId, seasons: [{ start: '11-01', end: '03-15' }], methods: ['cut'] }).returning({ id: allowances.id }))).id;
  const term = { parcelId, state: 'active' as const, startsOn: '2026-04-01', endsOn: '2027-03-31' };
  ids.personal = (await one(db().insert(permits).values({ ...term, holderUserId: ids.fay }).returning({ id: permits.id }))).id;
  ids.clubPermit = (await one(db().insert(permits).values({ ...term, holderClubId: ids.club }).returning({ id: permits.id }))).id;
  ids.other = (await one(db().insert(permits).values({ ...term, holderUserId: ids.hal }).returning({ id: permits.id }))).id;
  await db().insert(limits).values([
    { allowanceId, permitId: null, scope: 'season', quantity: '1.5', unit: 'kg' },
    { allowanceId, permitId: ids.personal, scope: 'day', quantity: '250', unit: 'g' },
    { allowanceId, permitId: ids.other, scope: 'day', quantity: '100', unit: 'g' },
  ]);
});

afterAll(async () => {
  await throwaway?.drop();
});

describe('findPermitCard', () => {
  it("given the holder or the parcel's landowner, it finds the card; given anyone else, nothing", async () => {
    expect((await findPermitCard(db(), { permitId: ids.personal, userId: ids.fay, clubIds: [] }))?.holderName).toBe('Fay Forager');
    expect((await findPermitCard(db(), { permitId: ids.personal, userId: ids.ben, clubIds: [] }))?.holderName).toBe('Fay Forager');
    expect(await findPermitCard(db(), { permitId: ids.personal, userId: ids.hal, clubIds: [] })).toBeNull();
    expect(await findPermitCard(db(), { permitId: ids.personal, userId: ids.gil, clubIds: [ids.club] })).toBeNull();
  });

  it("given a club permit, a member of the club finds it under the club's name; someone of no club, nothing", async () => {
    expect((await findPermitCard(db(), { permitId: ids.clubPermit, userId: ids.gil, clubIds: [ids.club] }))?.holderName).toBe('Card Club');
    expect(await findPermitCard(db(), { permitId: ids.clubPermit, userId: ids.gil, clubIds: [] })).toBeNull();
  });

  it("given limits of the parcel, of this permit and of another, the card reads the first two, as written (1.5, not 1.500000)", async () => {
    const card = await findPermitCard(db(), { permitId: ids.personal, userId: ids.fay, clubIds: [] });
    const read = card?.allowances[0]?.limits.map((l) => `${l.quantity} ${l.unit} ${l.scope} ${l.permitId === null ? 'parcel' : 'permit'}`).sort();
    expect(read).toEqual(['1.5 kg season parcel', '250 g day permit']);
  });
});

describe('findPermitStanding', () => {
  it('given a revocation at 03:30 UTC on 3 December, it reports that instant, which is 2 December on the parcel (EST = UTC−5, IANA tz data)', async () => {
    const at = new Date('2026-12-03T03:30:00Z');
    await db().update(permits).set({ state: 'revoked' }).where(eq(permits.id, ids.personal));
    await db().insert(permitEvents).values({ permitId: ids.personal, fromState: 'active', toState: 'revoked', actorId: ids.ben, reason: 'test', at });
    const standing = await findPermitStanding(db(), { permitId: ids.personal });
    expect(standing).toMatchObject({ state: 'revoked', endsOn: '2027-03-31', timeZone: 'America/New_York' });
    expect(standing?.revokedAt?.toISOString()).toBe('2026-12-03T03:30:00.000Z');
    expect(localDate(standing?.revokedAt ?? new Date(0), 'America/New_York')).toBe('2026-12-02');
  });

  it('given a permit that does not exist, nothing', async () => {
    expect(await findPermitStanding(db(), { permitId: '00000000-0000-4000-8000-000000000000' })).toBeNull();
  });
});
