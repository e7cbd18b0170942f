import { eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, createDb, type Db, type Executor } from '../../src/db/client';
import { loadMeasuredParcelsNear } from '../../src/db/field.queries';
import { applyMigrations } from '../../src/db/migrations';
import { allowances, closures, hazards, limits, parcels, permits, species, speciesCautions, terms } from '../../src/db/schema';
import type { Forager, MeasuredParcelFacts } from '../../src/lib/field/types';
import { createThrowawayDatabase, insertReferenceParcel, insertUser, migrationsFolder, one, type ThrowawayDatabase } from './throwaway-database';

/*
 * The check-in keeps the facts every forager shares by parcel and facts_version, which triggers
 * raise with each change to them (drizzle/0022), and reads only what depends on the forager and the
 * position each time (loadMeasuredParcelsNear). Inside a transaction it reads everything in one
 * statement, as it did before anything was kept; that is the reference here. After every kind of
 * change, the kept answer must be the one-statement answer, and show the change.
 */

const near = (forager: Forager, longitude: number, latitude: number) => ({ longitude, latitude, radiusM: 5, forager });
type Near = ReturnType<typeof near>;

/** The one-statement answer (a transaction keeps nothing), by parcel id. */
const reference = (db: Db, at: Near) => db.transaction((tx) => loadMeasuredParcelsNear(tx, at)).then(byId);
const kept = (db: Executor, at: Near) => loadMeasuredParcelsNear(db, at).then(byId);
const byId = (parcels: MeasuredParcelFacts[]) => [...parcels].sort((a, b) => a.id.localeCompare(b.id));

describe('the demo parcels, read through the kept facts', () => {
  let db: Db;
  beforeAll(() => {
    const url = process.env.DATABASE_URL;
    if (!url) throw new Error('DATABASE_URL is not set');
    db = createDb(url, { max: 2, hotMax: 2 });
  });
  afterAll(async () => {
    await closeDb(db);
  });

  it('given a point inside each listed parcel and each forager who holds a permit there, the kept answer is the one-statement answer, first read and again', async () => {
    // Each permit's holder, or for a club's permit one of its active members, with their active clubs.
    const rows = (await db.execute(sql`
      with holder as (
        select pm.parcel_id, coalesce(pm.holder_user_id,
          (select m.user_id from club_memberships m where m.club_id = pm.holder_club_id and m.state = 'active' order by m.user_id limit 1)) as forager
        from permits pm)
      select distinct p.id, ST_X(ST_PointOnSurface(p.boundary)) as lon, ST_Y(ST_PointOnSurface(p.boundary)) as lat, h.forager,
        array(select m.club_id::text from club_memberships m where m.user_id = h.forager and m.state = 'active' order by 1) as clubs
      from parcels p join holder h on h.parcel_id = p.id
      where p.status = 'listed' and h.forager is not null`)) as unknown as { id: string; lon: number; lat: number; forager: string; clubs: string[] }[];
    expect(rows.length).toBeGreaterThanOrEqual(3);
    for (const r of rows) {
      const at = near({ id: r.forager, clubIds: r.clubs }, r.lon, r.lat);
      const expected = await reference(db, at);
      expect(expected.map((p) => p.id), `${r.forager} at ${r.id}`).toContain(r.id);
      expect(await kept(db, at), `${r.forager} at ${r.id}, first read`).toEqual(expected);
      expect(await kept(db, at), `${r.forager} at ${r.id}, kept`).toEqual(expected);
    }
  });
});

describe('one parcel changed in every way its shared facts can change', () => {
  let throwaway: ThrowawayDatabase | undefined;
  const db = () => {
    if (!throwaway) throw new Error('the throwaway database was not created');
    return throwaway.db;
  };
  const ids = { owner: '', parcel: '', species: '', allowance: '', anaPermit: '', benPermit: '' };
  let ana: Forager;
  let ben: Forager;
  /** Inside the REFERENCES §2 ring (−75…−74.99, 45…45.01), far from its edges. */
  const inside = (forager: Forager) => near(forager, -74.995, 45.005);
  const agree = async (forager: Forager, why: string) => {
    const expected = await reference(db(), inside(forager));
    expect(expected, why).toHaveLength(1);
    expect(await kept(db(), inside(forager)), why).toEqual(expected);
    return expected[0] as MeasuredParcelFacts;
  };

  beforeAll(async () => {
    throwaway = await createThrowawayDatabase('tallywood_facts_kept');
    await applyMigrations(throwaway.db, migrationsFolder);
    ids.owner = await insertUser(db(), 'owner@kept.test', 'Olive Owner', ['forager', 'landowner']);
    ana = { id: await insertUser(db(), 'ana@kept.test', 'Ana'), clubIds: [] };
    ben = { id: await insertUser(db(), 'ben@kept.test', 'Ben'), clubIds: [] };
    ids.parcel = await insertReferenceParcel(db(), { ownerId: ids.owner, name: 'Kept Hollow' });
    ids.species = (await one(db().insert(species).values({ slug: 'kept-chanterelle', scientificName: 'Cantharellus cibarius', commonName: 'Chanterelle', kind: 'mushroom', usualUnit: 'g' }).returning())).id;
    ids.allowance = (await one(db().insert(allowances).values({ parcelId: ids.parcel, speciesId: ids.species, seasons: [{ start: '06-01', end: '09-30' }], methods: ['pick'] }).returning())).id;
    ids.anaPermit = (await one(db().insert(permits).values({ parcelId: ids.parcel, holderUserId: ana.id, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' }).returning())).id;
    ids.benPermit = (await one(db().insert(permits).values({ parcelId: ids.parcel, holderUserId: ben.id, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' }).returning())).id;
    await db().insert(limits).values([
      { allowanceId: ids.allowance, scope: 'day', quantity: '1000', unit: 'g' },
      { allowanceId: ids.allowance, permitId: ids.anaPermit, scope: 'day', quantity: '300', unit: 'g' },
      { allowanceId: ids.allowance, permitId: ids.benPermit, scope: 'day', quantity: '700', unit: 'g' },
    ]);
  });

  afterAll(async () => {
    await throwaway?.drop();
  });

  it("given two foragers with limits of their own on one allowance, each is answered with the parcel's limit and their own, not the other's", async () => {
    const forAna = await agree(ana, 'Ana');
    const forBen = await agree(ben, 'Ben');
    // The parcel's own limit first (the statement orders by permit, nulls first).
    expect(forAna.allowances[0]?.limits).toEqual([
      { scope: 'day', quantity: '1000', unit: 'g', permitId: null },
      { scope: 'day', quantity: '300', unit: 'g', permitId: ids.anaPermit },
    ]);
    expect(forBen.allowances[0]?.limits.map((l) => l.quantity)).toEqual(['1000', '700']);
  });

  const changes: [string, () => Promise<unknown>, (p: MeasuredParcelFacts) => unknown, unknown][] = [
    ['the parcel renamed', () => db().update(parcels).set({ name: 'Kept Hollow North' }).where(eq(parcels.id, ids.parcel)), (p) => p.name, 'Kept Hollow North'],
    ['its nearing threshold changed', () => db().update(parcels).set({ nearingThresholdPercent: 60 }).where(eq(parcels.id, ids.parcel)), (p) => p.nearingThresholdPercent, 60],
    ['new terms', async () => (await one(db().insert(terms).values({ parcelId: ids.parcel, version: 1, body: 'Stay on the paths.' }).returning())).id, (p) => p.currentTermsId === null, false],
    ['a closure', () => db().insert(closures).values({ parcelId: ids.parcel, startsOn: '2026-08-01', endsOn: '2026-08-14', reason: 'Nesting birds' }), (p) => p.closures.map((c) => c.reason), ['Nesting birds']],
    ['a hazard', () => db().insert(hazards).values({ parcelId: ids.parcel, kind: 'other', title: 'Old well', detail: 'Unfenced, by the north gate.' }), (p) => p.hazards.map((h) => h.title), ['Old well']],
    ['the hazard reworded', () => db().update(hazards).set({ title: 'Old well (capped)' }).where(eq(hazards.parcelId, ids.parcel)), (p) => p.hazards.map((h) => h.title), ['Old well (capped)']],
    ['the season moved', () => db().update(allowances).set({ seasons: [{ start: '07-01', end: '10-15' }] }).where(eq(allowances.id, ids.allowance)), (p) => p.allowances[0]?.seasons, [{ start: '07-01', end: '10-15' }]],
    ["the parcel's limit lowered", () => db().update(limits).set({ quantity: '800' }).where(sql`${limits.allowanceId} = ${ids.allowance} and ${limits.permitId} is null`), (p) => p.allowances[0]?.limits.find((l) => l.permitId === null)?.quantity, '800'],
    ["Ana's own limit removed", () => db().delete(limits).where(eq(limits.permitId, ids.anaPermit)), (p) => p.allowances[0]?.limits.length, 1],
    ['the species renamed in the catalogue', () => db().update(species).set({ commonName: 'Golden chanterelle' }).where(eq(species.id, ids.species)), (p) => p.allowances[0]?.commonName, 'Golden chanterelle'],
    ['a caution added to the species', () => db().insert(speciesCautions).values({ speciesId: ids.species, position: 1, text: 'Compare with the jack-o’-lantern.', sourceTitle: 'Test' }), (p) => p.allowances[0]?.cautions, ['Compare with the jack-o’-lantern.']],
    ['the allowance removed', () => db().update(allowances).set({ removedAt: new Date() }).where(eq(allowances.id, ids.allowance)), (p) => p.allowances.length, 0],
  ];

  it.each(changes)('given %s, the kept answer is the one-statement answer and shows it', async (_what, change, read, expected) => {
    const before = await agree(ana, 'before');
    expect(read(before)).not.toEqual(expected);
    await change();
    const after = await agree(ana, 'after');
    expect(read(after)).toEqual(expected);
  });
});
