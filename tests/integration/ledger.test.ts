import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ledgerTotals, listLedger } from '../../src/db/ledger.queries';
import { applyMigrations } from '../../src/db/migrations';
import { allowances, harvestEntries, parcels, species, uploads, users, type NewHarvestEntry } from '../../src/db/schema';
import { buildCsv, csvField, ledgerCsv, ledgerCsvHeader, plainText } from '../../src/lib/csv';
import { createThrowawayDatabase, migrationsFolder, one, referenceBoundary, type ThrowawayDatabase } from './throwaway-database';

/**
 * The ledger is append-only by trigger, so every row here lives in a throwaway database. Base
 * quantities are written by hand from REFERENCES.md §1, never computed by our own code.
 */
let throwaway: ThrowawayDatabase | undefined;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};

const ids = { forager: '', other: '', parcel: '', otherParcel: '', chaga: '', leek: '', e1: '', e2: '', e3: '', e4: '', e5: '', theirs: '' };
/** A parcel name with a comma and double quotes, so the CSV must quote it (RFC 4180 §2 rules 6 and 7). */
const parcelName = 'Birch Hollow, "upper" lot';

async function entry(values: Omit<NewHarvestEntry, 'idempotencyKey' | 'recordedBy' | 'parcelId'> & { parcelId?: string }) {
  const row = await one(db().insert(harvestEntries).values({ parcelId: ids.parcel, recordedBy: values.foragerId, idempotencyKey: crypto.randomUUID(), ...values }).returning({ id: harvestEntries.id }));
  return row.id;
}

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_ledger');
  await applyMigrations(throwaway.db, migrationsFolder);
  const owner = await one(db().insert(users).values({ email: 'owner@ledger.test', name: 'Owner', roles: ['forager', 'landowner'] }).returning());
  ids.forager = (await one(db().insert(users).values({ email: 'ada@ledger.test', name: 'Ada Forager' }).returning())).id;
  ids.other = (await one(db().insert(users).values({ email: 'bo@ledger.test', name: 'Bo Other' }).returning())).id;
  const boundary = referenceBoundary;
  ids.parcel = (await one(db().insert(parcels).values({ ownerId: owner.id, name: parcelName, boundary, areaM2: 876_163.448, timeZone: 'America/New_York' }).returning())).id;
  ids.otherParcel = (await one(db().insert(parcels).values({ ownerId: owner.id, name: 'Empty Lot', boundary, areaM2: 876_163.448, timeZone: 'America/New_York' }).returning())).id;
  ids.chaga = (await one(db().insert(species).values({ slug: 'chaga-test', scientificName: 'Inonotus obliquus', commonName: 'Chaga', kind: 'mushroom', usualUnit: 'g' }).returning())).id;
  ids.leek = (await one(db().insert(species).values({ slug: 'leek-test', scientificName: 'Allium tricoccum', commonName: 'Wild leek', kind: 'leaf', usualUnit: 'plant' }).returning())).id;
  // A season across New Year; wild leek has no allowance, so its entry falls back to the calendar year.
  await db().insert(allowances).values({ parcelId: ids.parcel, speciesId: ids.chaga, seasons: [{ start: '11-01', end: '03-15' }], methods: ['strip'] });
  const photo = await one(db().insert(uploads).values({ ownerId: ids.forager, purpose: 'harvest-photo', storageKey: 'ledger-test/photo.jpg', contentType: 'image/jpeg', byteSize: 10, sha256: '0'.repeat(64) }).returning());

  const chaga = { foragerId: ids.forager, speciesId: ids.chaga, method: 'strip' as const, dimension: 'mass' as const };
  // 12 oz = 340.1942775 g exactly (REFERENCES.md §1 ⚙, "Worked cases").
  ids.e1 = await entry({ ...chaga, quantity: '12', unit: 'oz', baseQuantity: '340.1942775', localDate: '2026-12-20', position: { type: 'Point', coordinates: [-74.995, 45.005] }, photoUploadId: photo.id, recordedAt: new Date('2026-12-20T15:00:00Z') });
  ids.e2 = await entry({ ...chaga, quantity: '500', unit: 'g', baseQuantity: '500', localDate: '2027-01-10', breach: true, acknowledgedOver: true, recordedAt: new Date('2027-01-10T16:00:00Z') });
  // Recorded after the season closed (15 Mar): it still counts in the season of the entry it corrects.
  ids.e3 = await entry({ ...chaga, quantity: '-100', unit: 'g', baseQuantity: '-100', localDate: '2027-04-02', correctsEntryId: ids.e2, correctionReason: '=100 g was the bag, weighed again at home', recordedAt: new Date('2027-04-02T12:00:00Z') });
  ids.e4 = await entry({ ...chaga, quantity: '200', unit: 'g', baseQuantity: '200', localDate: '2027-11-05', recordedAt: new Date('2027-11-05T14:00:00Z') });
  ids.e5 = await entry({ foragerId: ids.forager, speciesId: ids.leek, method: 'dig', quantity: '3', unit: 'plant', dimension: 'count', baseQuantity: '3', localDate: '2026-06-01', recordedAt: new Date('2026-06-01T13:00:00Z') });
  ids.theirs = await entry({ ...chaga, foragerId: ids.other, quantity: '1', unit: 'kg', baseQuantity: '1000', localDate: '2026-12-21', recordedAt: new Date('2026-12-21T15:00:00Z') });
});

afterAll(async () => {
  await throwaway?.drop();
});

describe('listLedger', () => {
  it("given two foragers on one parcel, it returns only the forager's own entries, newest recorded first", async () => {
    const rows = await listLedger(db(), { foragerId: ids.forager });
    expect(rows.map((r) => r.id)).toEqual([ids.e4, ids.e3, ids.e2, ids.e1, ids.e5]);
    expect((await listLedger(db(), { foragerId: ids.other })).map((r) => r.id)).toEqual([ids.theirs]);
  });

  it('given an entry in ounces, it returns the quantity as recorded, its base quantity in grams, names, photo and position', async () => {
    const e1 = (await listLedger(db(), { foragerId: ids.forager })).find((r) => r.id === ids.e1);
    expect(e1).toMatchObject({
      localDate: '2026-12-20', recordedAt: '2026-12-20T15:00:00.000Z', parcelName, speciesName: 'Chaga', scientificName: 'Inonotus obliquus',
      method: 'strip', quantity: '12', unit: 'oz', baseQuantity: '340.1942775', baseUnit: 'g', dimension: 'mass',
      breach: false, correctsEntryId: null, isCorrected: false, hasPhoto: true, longitude: -74.995, latitude: 45.005, recordedByName: 'Ada Forager',
    });
  });

  it('given a correction, it links it to the entry it corrects, and marks that entry corrected and the breach', async () => {
    const rows = await listLedger(db(), { foragerId: ids.forager });
    const e2 = rows.find((r) => r.id === ids.e2);
    const e3 = rows.find((r) => r.id === ids.e3);
    expect(e2).toMatchObject({ breach: true, acknowledgedOver: true, isCorrected: true, correctsEntryId: null });
    expect(e3).toMatchObject({ quantity: '-100', baseQuantity: '-100', correctsEntryId: ids.e2, correctionReason: '=100 g was the bag, weighed again at home', isCorrected: false });
  });

  it('given a season from 1 Nov to 15 Mar, it places December and January in the season that began in November, and a later correction with them', async () => {
    const rows = await listLedger(db(), { foragerId: ids.forager });
    const season = (id: string) => rows.find((r) => r.id === id);
    for (const id of [ids.e1, ids.e2, ids.e3]) expect(season(id)).toMatchObject({ seasonStart: '2026-11-01', seasonEnd: '2027-03-15', seasonBasis: 'allowance' });
    expect(season(ids.e4)).toMatchObject({ seasonStart: '2027-11-01', seasonEnd: '2028-03-15', seasonBasis: 'allowance' });
    expect(season(ids.e5)).toMatchObject({ seasonStart: '2026-01-01', seasonEnd: '2026-12-31', seasonBasis: 'calendar-year' });
  });

  it('given filters, it narrows by season year, dates, species and parcel', async () => {
    const list = async (filters: Parameters<typeof listLedger>[1]['filters']) => (await listLedger(db(), { foragerId: ids.forager, filters })).map((r) => r.id);
    expect(await list({ seasonYear: 2026 })).toEqual([ids.e3, ids.e2, ids.e1, ids.e5]);
    expect(await list({ from: '2027-01-01', to: '2027-04-30' })).toEqual([ids.e3, ids.e2]);
    expect(await list({ speciesId: ids.leek })).toEqual([ids.e5]);
    expect(await list({ parcelId: ids.otherParcel })).toEqual([]);
    expect(await list({ parcelId: ids.parcel, speciesId: ids.chaga, seasonYear: 2027 })).toEqual([ids.e4]);
  });
});

describe('ledgerTotals', () => {
  it('given 12 oz + 500 g and a −100 g correction in one season, it totals 740.1942775 g (REFERENCES.md §1 ⚙: 12 oz = 340.1942775 g)', async () => {
    const totals = await ledgerTotals(db(), { foragerId: ids.forager });
    const season2026 = totals.find((t) => t.speciesId === ids.chaga && t.seasonStart === '2026-11-01');
    // 340.1942775 + 500 − 100 = 740.1942775, worked by hand.
    expect(season2026).toMatchObject({ parcelName, speciesName: 'Chaga', seasonEnd: '2027-03-15', seasonBasis: 'allowance', dimension: 'mass', baseUnit: 'g', baseTotal: '740.1942775', entries: 3, corrections: 1, breaches: 1 });
  });

  it("given entries in other seasons and dimensions, it keeps them apart and leaves out the other forager's kilogram", async () => {
    const totals = await ledgerTotals(db(), { foragerId: ids.forager });
    expect(totals.map((t) => [t.speciesName, t.seasonStart, t.seasonBasis, t.baseTotal, t.baseUnit])).toEqual([
      ['Chaga', '2027-11-01', 'allowance', '200', 'g'],
      ['Chaga', '2026-11-01', 'allowance', '740.1942775', 'g'],
      ['Wild leek', '2026-01-01', 'calendar-year', '3', 'count'],
    ]);
    expect((await ledgerTotals(db(), { foragerId: ids.other })).map((t) => t.baseTotal)).toEqual(['1000']);
  });
});

describe('the ledger CSV (RFC 4180 §2)', () => {
  it('given a field with a comma and a double quote, it encloses it in quotes and doubles the quote (rules 6 and 7)', () => {
    expect(csvField('Birch Hollow, "upper" lot')).toBe('"Birch Hollow, ""upper"" lot"');
    expect(csvField('two\r\nlines')).toBe('"two\r\nlines"');
    expect(csvField('plain')).toBe('plain');
    expect(csvField(null)).toBe('');
  });

  it('given a header and rows, every record ends in CRLF (rule 1) and the header has the records\' shape (rule 3)', () => {
    expect(buildCsv(['a', 'b'], [['x,y', 2], [true, null]])).toBe('a,b\r\n"x,y",2\r\ntrue,\r\n');
  });

  it('given text a spreadsheet would run as a formula, it keeps it text with a leading apostrophe (OWASP CSV Injection)', () => {
    expect(plainText('=HYPERLINK("x")')).toBe(`'=HYPERLINK("x")`);
    expect(plainText('Chaga')).toBe('Chaga');
  });

  it("given the forager's ledger, it writes the header and each entry with ISO dates and both quantities", async () => {
    const csv = ledgerCsv(await listLedger(db(), { foragerId: ids.forager }));
    const lines = csv.split('\r\n');
    expect(lines[0]).toBe(ledgerCsvHeader.join(','));
    expect(lines[0]).toBe('entry_id,local_date,recorded_at,parcel,species,scientific_name,method,quantity,unit,base_quantity,base_unit,dimension,season_start,season_end,season_basis,breach,corrects_entry_id,correction_reason,corrected_later,recorded_by,photo,latitude,longitude');
    expect(lines).toHaveLength(5 + 2); // header, five entries, and the empty string after the last CRLF
    expect(lines).toContain(`${ids.e1},2026-12-20,2026-12-20T15:00:00.000Z,"Birch Hollow, ""upper"" lot",Chaga,Inonotus obliquus,strip,12,oz,340.1942775,g,mass,2026-11-01,2027-03-15,allowance,false,,,false,Ada Forager,true,45.005,-74.995`);
    expect(lines).toContain(`${ids.e3},2027-04-02,2027-04-02T12:00:00.000Z,"Birch Hollow, ""upper"" lot",Chaga,Inonotus obliquus,strip,-100,g,-100,g,mass,2026-11-01,2027-03-15,allowance,false,${ids.e2},"'=100 g was the bag, weighed again at home",false,Ada Forager,false,,`);
  });
});
