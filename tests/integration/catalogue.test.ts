import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { declineLandowner, findLandownerClaim, verifyLandowner } from '../../src/db/accounts.queries';
import { addSpecies, editSpecies, setSpeciesRetired, speciesHistory } from '../../src/db/catalogue.commands';
import { loadParcelFacts } from '../../src/db/field.queries';
import { applyMigrations } from '../../src/db/migrations';
import { saveAllowance } from '../../src/db/parcel-rules.queries';
import { auditEvents, parcels, species, speciesCautions, users } from '../../src/db/schema';
import type { SpeciesInput } from '../../src/lib/catalogue.schemas';
import { AppError } from '../../src/lib/errors';
import { createThrowawayDatabase, insertUser, migrationsFolder, one, referenceBoundary, type ThrowawayDatabase } from './throwaway-database';

/** Time is an argument; this instant is only a label on the rows. */
const now = new Date('2026-12-01T12:00:00Z');

let throwaway: ThrowawayDatabase | undefined;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};
const ids = { admin: '', forager: '', landowner: '', unverified: '', parcel: '' };

/** An invented species; the cautions are test text, not advice. */
const ramps = (cautions: SpeciesInput['cautions']): SpeciesInput => ({
  commonName: 'Test ramp', scientificName: 'Allium testum', kind: 'leaf', usualUnit: 'g', usualMethods: ['cut'],
  cautions, lookalikes: [], protectedStatus: null,
});
const first = { text: 'First test caution.', sourceTitle: 'A test guide, 2020', sourceUrl: 'https://example.org/guide' };
const second = { text: 'Second test caution.', sourceTitle: 'Another test guide', sourceUrl: null };

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_catalogue');
  await applyMigrations(throwaway.db, migrationsFolder);
  ids.admin = (await one(db().insert(users).values({ email: 'nora@example.org', name: 'Nora', roles: ['admin'] }).returning({ id: users.id }))).id;
  ids.forager = await insertUser(db(), 'owen@example.org', 'Owen');
  ids.landowner = await insertUser(db(), 'walter@example.org', 'Walter', ['forager', 'landowner']);
  ids.unverified = (await one(db().insert(users).values({ email: 'dale@example.org', name: 'Dale', roles: ['forager', 'landowner'], claimedLand: 'Test Sugarbush', signUpNote: 'Ask the town clerk.' }).returning({ id: users.id }))).id;
  ids.parcel = (await one(db().insert(parcels).values({ ownerId: ids.landowner, name: 'Catalogue Glen', status: 'listed', boundary: referenceBoundary, areaM2: 876_163.448, timeZone: 'America/New_York' }).returning({ id: parcels.id }))).id;
});

afterAll(async () => {
  await throwaway?.drop();
});

const countRows = async () => ({
  species: (await db().select().from(species)).length,
  cautions: (await db().select().from(speciesCautions)).length,
  audit: (await db().select().from(auditEvents)).length,
});

describe('the catalogue commands are the admin\'s only', () => {
  it('given a forager or a landowner as the admin, adding, editing, retiring and reading history do nothing and answer null', async () => {
    const added = await addSpecies(db(), { adminId: ids.admin, input: ramps([first]), now });
    if (!added) throw new Error('the admin could not add a species');
    const before = await countRows();
    for (const other of [ids.forager, ids.landowner, 'no-such-account']) {
      expect(await addSpecies(db(), { adminId: other, input: ramps([second]), now })).toBeNull();
      expect(await editSpecies(db(), { speciesId: added.id, adminId: other, input: ramps([second]), now })).toBeNull();
      expect(await setSpeciesRetired(db(), { speciesId: added.id, adminId: other, retired: true, now })).toBeNull();
      expect(await speciesHistory(db(), { adminId: other, speciesIds: [added.id] })).toBeNull();
    }
    expect(await countRows()).toEqual(before);
    const [row] = await db().select({ cautions: species.cautions, retiredAt: species.retiredAt }).from(species).where(eq(species.id, added.id));
    expect(row).toEqual({ cautions: ['First test caution.'], retiredAt: null });
  });
});

describe('the admin keeps the catalogue', () => {
  it('given an edit of the cautions, the array the field reads follows in order and the history says who changed what', async () => {
    const added = await addSpecies(db(), { adminId: ids.admin, input: { ...ramps([first]), commonName: 'Edited ramp' }, now });
    if (!added) throw new Error('not added');
    const later = new Date(now.getTime() + 60_000);
    const edited = await editSpecies(db(), { speciesId: added.id, adminId: ids.admin, input: { ...ramps([second, first]), commonName: 'Edited ramp', scientificName: 'Allium editum' }, now: later });
    expect(edited?.changes).toEqual([
      { field: 'scientificName', before: 'Allium testum', after: 'Allium editum' },
      { field: 'cautions', added: ['Second test caution. (source: Another test guide)'], removed: [] },
    ]);
    const [row] = await db().select({ cautions: species.cautions }).from(species).where(eq(species.id, added.id));
    expect(row?.cautions).toEqual(['Second test caution.', 'First test caution.']);
    const history = await speciesHistory(db(), { adminId: ids.admin, speciesIds: [added.id] });
    expect(history?.map((e) => [e.action, e.actorName])).toEqual([['species.edited', 'Nora'], ['species.added', 'Nora']]);
    expect(history?.[0]?.changes).toEqual(edited?.changes);
  });

  it('given the same species saved unchanged, no history is written', async () => {
    const added = await addSpecies(db(), { adminId: ids.admin, input: { ...ramps([first]), commonName: 'Unchanged ramp' }, now });
    if (!added) throw new Error('not added');
    const result = await editSpecies(db(), { speciesId: added.id, adminId: ids.admin, input: { ...ramps([first]), commonName: 'Unchanged ramp' }, now });
    expect(result?.changes).toEqual([]);
    expect((await speciesHistory(db(), { adminId: ids.admin, speciesIds: [added.id] }))?.length).toBe(1);
  });

  it('given a retired species, a landowner cannot add it to an allowance, but one already allowed stays and can still be changed', async () => {
    const allowedBefore = await addSpecies(db(), { adminId: ids.admin, input: { ...ramps([first]), commonName: 'Allowed ramp' }, now });
    const notYet = await addSpecies(db(), { adminId: ids.admin, input: { ...ramps([first]), commonName: 'New ramp' }, now });
    if (!allowedBefore || !notYet) throw new Error('not added');
    const allowance = (speciesId: string) => ({ speciesId, seasons: [{ start: '04-01', end: '05-31' }], methods: ['cut' as const], limits: [{ scope: 'day' as const, quantity: '500', unit: 'g' as const }] });
    expect(await saveAllowance(db(), { parcelId: ids.parcel, ownerId: ids.landowner, allowance: allowance(allowedBefore.id), now })).not.toBeNull();
    for (const s of [allowedBefore, notYet]) expect((await setSpeciesRetired(db(), { speciesId: s.id, adminId: ids.admin, retired: true, now }))?.changed).toBe(true);

    const refused = await saveAllowance(db(), { parcelId: ids.parcel, ownerId: ids.landowner, allowance: allowance(notYet.id), now }).catch((e: unknown) => e);
    expect(refused).toBeInstanceOf(AppError);
    expect(refused).toMatchObject({ status: 409, code: 'species-retired', field: 'speciesId' });
    expect(await saveAllowance(db(), { parcelId: ids.parcel, ownerId: ids.landowner, allowance: { ...allowance(allowedBefore.id), seasons: [{ start: '04-15', end: '05-31' }] }, now })).not.toBeNull();

    // The field still reads the retired species on that parcel, with cautions the admin changed after retiring it.
    await editSpecies(db(), { speciesId: allowedBefore.id, adminId: ids.admin, input: { ...ramps([second]), commonName: 'Allowed ramp' }, now });
    const facts = await loadParcelFacts(db(), { parcelId: ids.parcel, forager: { id: ids.landowner, clubIds: [] } });
    expect(facts?.allowances.find((a) => a.speciesId === allowedBefore.id)?.cautions).toEqual(['Second test caution.']);

    // Brought back, it can be added again.
    await setSpeciesRetired(db(), { speciesId: notYet.id, adminId: ids.admin, retired: false, now });
    expect(await saveAllowance(db(), { parcelId: ids.parcel, ownerId: ids.landowner, allowance: allowance(notYet.id), now })).not.toBeNull();
  });
});

describe('verifying a landowner', () => {
  it('given someone who is not an admin, what the landowner sent is not shown and nothing can be decided', async () => {
    for (const other of [ids.forager, ids.landowner]) {
      expect(await findLandownerClaim(db(), { userId: ids.unverified, adminId: other })).toBeNull();
      expect(await declineLandowner(db(), { userId: ids.unverified, adminId: other, reason: 'No.', now })).toBeNull();
      expect(await verifyLandowner(db(), { userId: ids.unverified, adminId: other, now })).toBeNull();
    }
    const [row] = await db().select({ verified: users.landownerVerifiedAt, declined: users.landownerDeclinedAt }).from(users).where(eq(users.id, ids.unverified));
    expect(row).toEqual({ verified: null, declined: null });
  });

  it('given the admin, it shows the claimed land and note, declines with a reason, and may verify later', async () => {
    expect(await findLandownerClaim(db(), { userId: ids.unverified, adminId: ids.admin })).toMatchObject({ claimedLand: 'Test Sugarbush', signUpNote: 'Ask the town clerk.' });
    expect(await findLandownerClaim(db(), { userId: ids.forager, adminId: ids.admin })).toBeNull();
    expect(await declineLandowner(db(), { userId: ids.unverified, adminId: ids.admin, reason: 'Send the tax bill.', now })).toMatchObject({ email: 'dale@example.org' });
    expect(await findLandownerClaim(db(), { userId: ids.unverified, adminId: ids.admin })).toMatchObject({ landownerDeclineReason: 'Send the tax bill.', landownerVerifiedAt: null });
    expect(await verifyLandowner(db(), { userId: ids.unverified, adminId: ids.admin, now })).toMatchObject({ email: 'dale@example.org' });
    expect(await declineLandowner(db(), { userId: ids.unverified, adminId: ids.admin, reason: 'Too late.', now })).toBeNull();
    const events = await db().select({ action: auditEvents.action }).from(auditEvents).where(and(eq(auditEvents.subjectType, 'user'), eq(auditEvents.subjectId, ids.unverified)));
    expect(events.map((e) => e.action).sort()).toEqual(['landowner.declined', 'landowner.verified']);
  });
});
