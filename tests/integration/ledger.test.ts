import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ledgerTotals, listLedger } from '../../src/db/ledger.queries';
import { applyMigrations } from '../../src/db/migrations';
import { allowances, harvestEntries, harvestQuantities, limits, parcels, permits, species, uploads, users, type NewHarvestEntry } from '../../src/db/schema';
import { buildCsv, csvField, ledgerCsv, ledgerCsvHeader, plainText } from '../../src/lib/csv';
import type { Forager } from '../../src/lib/field/types';
import type { Measure, Unit } from '../../src/lib/units';
import { checkIn } from '../../src/server/field/check-in';
import { correctEntry } from '../../src/server/field/correction';
import { recordHarvest } from '../../src/server/field/harvest';
import { createThrowawayDatabase, migrationsFolder, one, referenceBoundary, referenceRing, type ThrowawayDatabase } from './throwaway-database';

/**
 * The ledger is append-only by trigger, so every row here lives in a throwaway database. Base
 * quantities are written by hand from REFERENCES.md §1, never computed by our own code. The first
 * forager's entries are written as rows with the counting facts a use case would have stored on
 * them (the ledger shows what is stored); the last describe records through the use cases, so that
 * the season stored on each entry is the one the field decided.
 */
let throwaway: ThrowawayDatabase | undefined;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};

const ids = {
  owner: '', forager: '', other: '', cy: '', parcel: '', otherParcel: '', seasonLot: '', chaga: '', leek: '', ramps: '',
  e1: '', e2: '', e3: '', e4: '', e5: '', theirs: '',
  r1: '', r2: '', r3: '', w1: '', w2: '', w3: '',
};
/** A parcel name with a comma and double quotes, so the CSV must quote it (RFC 4180 §2 rules 6 and 7). */
const parcelName = 'Birch Hollow, "upper" lot';
const chagaSeason2026 = { seasonStart: '2026-11-01', seasonEnd: '2027-03-15' };

type Quantity = { measure: Measure; quantity: string; unit: Unit; baseQuantity: string };
type EntryValues = Omit<NewHarvestEntry, 'idempotencyKey' | 'recordedBy' | 'parcelId' | 'countedOn'> & { parcelId?: string; countedOn?: string };

/** An entry with its quantities; it counts on the day it was recorded unless `countedOn` says otherwise. */
async function entry(values: EntryValues, quantities: Quantity[]) {
  const row = await one(
    db()
      .insert(harvestEntries)
      .values({ parcelId: ids.parcel, countedOn: values.localDate, recordedBy: values.foragerId, idempotencyKey: crypto.randomUUID(), ...values })
      .returning({ id: harvestEntries.id }),
  );
  await db().insert(harvestQuantities).values(quantities.map((q) => ({ entryId: row.id, ...q })));
  return row.id;
}

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_ledger');
  await applyMigrations(throwaway.db, migrationsFolder);
  ids.owner = (await one(db().insert(users).values({ email: 'owner@ledger.test', name: 'Owner', roles: ['forager', 'landowner'] }).returning())).id;
  ids.forager = (await one(db().insert(users).values({ email: 'ada@ledger.test', name: 'Ada Forager' }).returning())).id;
  ids.other = (await one(db().insert(users).values({ email: 'bo@ledger.test', name: 'Bo Other' }).returning())).id;
  const boundary = referenceBoundary;
  ids.parcel = (await one(db().insert(parcels).values({ ownerId: ids.owner, name: parcelName, boundary, areaM2: 876_163.448, timeZone: 'America/New_York' }).returning())).id;
  ids.otherParcel = (await one(db().insert(parcels).values({ ownerId: ids.owner, name: 'Empty Lot', boundary, areaM2: 876_163.448, timeZone: 'America/New_York' }).returning())).id;
  ids.chaga = (await one(db().insert(species).values({ slug: 'chaga-test', scientificName: 'Inonotus obliquus', commonName: 'Chaga', kind: 'mushroom', usualUnit: 'g' }).returning())).id;
  ids.leek = (await one(db().insert(species).values({ slug: 'leek-test', scientificName: 'Allium tricoccum', commonName: 'Wild leek', kind: 'leaf', usualUnit: 'plant' }).returning())).id;
  // A season across New Year for chaga. Wild leek's window is today 1–31 May; its entry was stored
  // in 15 Apr – 15 Jun, the window when it was recorded.
  await db().insert(allowances).values({ parcelId: ids.parcel, speciesId: ids.chaga, seasons: [{ start: '11-01', end: '03-15' }], methods: ['strip'] });
  await db().insert(allowances).values({ parcelId: ids.parcel, speciesId: ids.leek, seasons: [{ start: '05-01', end: '05-31' }], methods: ['dig'] });
  const photo = await one(db().insert(uploads).values({ ownerId: ids.forager, purpose: 'harvest-photo', storageKey: 'ledger-test/photo.jpg', contentType: 'image/jpeg', byteSize: 10, sha256: '0'.repeat(64) }).returning());

  const chaga = { foragerId: ids.forager, speciesId: ids.chaga, method: 'strip' as const, ...chagaSeason2026 };
  const grams = (g: string): Quantity[] => [{ measure: 'mass', quantity: g, unit: 'g', baseQuantity: g }];
  // 12 oz = 340.1942775 g exactly (REFERENCES.md §1 ⚙, "Worked cases").
  ids.e1 = await entry(
    { ...chaga, localDate: '2026-12-20', position: { type: 'Point', coordinates: [-74.995, 45.005] }, photoUploadId: photo.id, recordedAt: new Date('2026-12-20T15:00:00Z') },
    [{ measure: 'mass', quantity: '12', unit: 'oz', baseQuantity: '340.1942775' }],
  );
  ids.e2 = await entry({ ...chaga, localDate: '2027-01-10', breach: true, acknowledgedOver: true, recordedAt: new Date('2027-01-10T16:00:00Z') }, grams('500'));
  // Recorded after the season closed (15 Mar): it counts on its root's day, in its root's season.
  ids.e3 = await entry(
    { ...chaga, localDate: '2027-04-02', countedOn: '2027-01-10', correctsEntryId: ids.e2, rootEntryId: ids.e2, correctionReason: '=100 g was the bag, weighed again at home', recordedAt: new Date('2027-04-02T12:00:00Z') },
    grams('-100'),
  );
  ids.e4 = await entry({ ...chaga, localDate: '2027-11-05', seasonStart: '2027-11-01', seasonEnd: '2028-03-15', recordedAt: new Date('2027-11-05T14:00:00Z') }, grams('200'));
  // "45 g and 3 plants": one entry in two measures.
  ids.e5 = await entry(
    { foragerId: ids.forager, speciesId: ids.leek, method: 'dig', localDate: '2026-06-01', seasonStart: '2026-04-15', seasonEnd: '2026-06-15', recordedAt: new Date('2026-06-01T13:00:00Z') },
    [{ measure: 'mass', quantity: '45', unit: 'g', baseQuantity: '45' }, { measure: 'plants', quantity: '3', unit: 'plant', baseQuantity: '3' }],
  );
  ids.theirs = await entry({ ...chaga, foragerId: ids.other, localDate: '2026-12-21', recordedAt: new Date('2026-12-21T15:00:00Z') }, [{ measure: 'mass', quantity: '1', unit: 'kg', baseQuantity: '1000' }]);
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

  it('given an entry in ounces, it returns the quantity as recorded with its base quantity in grams, its days, zone, names, photo and position', async () => {
    const e1 = (await listLedger(db(), { foragerId: ids.forager })).find((r) => r.id === ids.e1);
    expect(e1).toMatchObject({
      localDate: '2026-12-20', countedOn: '2026-12-20', recordedAt: '2026-12-20T15:00:00.000Z', timeZone: 'America/New_York',
      parcelName, speciesName: 'Chaga', scientificName: 'Inonotus obliquus', method: 'strip',
      quantities: [{ measure: 'mass', quantity: '12', unit: 'oz', baseQuantity: '340.1942775' }],
      breach: false, correctsEntryId: null, rootEntryId: null, isCorrected: false, hasPhoto: true, longitude: -74.995, latitude: 45.005, recordedByName: 'Ada Forager',
    });
  });

  it('given a correction, it links it to the entry it corrects and its root, shows the day it counts on beside the day it was recorded, and marks that entry corrected and the breach', async () => {
    const rows = await listLedger(db(), { foragerId: ids.forager });
    const e2 = rows.find((r) => r.id === ids.e2);
    const e3 = rows.find((r) => r.id === ids.e3);
    expect(e2).toMatchObject({ breach: true, acknowledgedOver: true, isCorrected: true, correctsEntryId: null, rootEntryId: null });
    expect(e3).toMatchObject({
      localDate: '2027-04-02', countedOn: '2027-01-10', quantities: [{ measure: 'mass', quantity: '-100', unit: 'g', baseQuantity: '-100' }],
      correctsEntryId: ids.e2, rootEntryId: ids.e2, correctionReason: '=100 g was the bag, weighed again at home', isCorrected: false,
    });
  });

  it('given an entry in two measures, it returns one quantity per measure, mass before plants', async () => {
    const e5 = (await listLedger(db(), { foragerId: ids.forager })).find((r) => r.id === ids.e5);
    expect(e5?.quantities).toEqual([
      { measure: 'mass', quantity: '45', unit: 'g', baseQuantity: '45' },
      { measure: 'plants', quantity: '3', unit: 'plant', baseQuantity: '3' },
    ]);
  });

  it('given a season from 1 Nov to 15 Mar, it shows December, January and a correction recorded in April in the season that began in November, as stored', async () => {
    const rows = await listLedger(db(), { foragerId: ids.forager });
    const season = (id: string) => rows.find((r) => r.id === id);
    for (const id of [ids.e1, ids.e2, ids.e3]) expect(season(id)).toMatchObject({ seasonStart: '2026-11-01', seasonEnd: '2027-03-15' });
    expect(season(ids.e4)).toMatchObject({ seasonStart: '2027-11-01', seasonEnd: '2028-03-15' });
    // No calendar-year basis any more: every entry has the season it was stored with.
    for (const row of rows) expect(row).not.toHaveProperty('seasonBasis');
  });

  it("given an allowance whose window was changed after an entry, it shows the season stored on the entry, not one worked from today's window", async () => {
    // Stored 2026-04-15 … 2026-06-15. Today's window (1–31 May) does not hold 1 June: reading it
    // from the window would give no season (the old query fell back to the calendar year 2026).
    const e5 = (await listLedger(db(), { foragerId: ids.forager })).find((r) => r.id === ids.e5);
    expect(e5).toMatchObject({ seasonStart: '2026-04-15', seasonEnd: '2026-06-15' });
  });

  it('given filters, it narrows by season year, the days entries count on, species and parcel', async () => {
    const list = async (filters: Parameters<typeof listLedger>[1]['filters']) => (await listLedger(db(), { foragerId: ids.forager, filters })).map((r) => r.id);
    expect(await list({ seasonYear: 2026 })).toEqual([ids.e3, ids.e2, ids.e1, ids.e5]);
    expect(await list({ from: '2027-01-01', to: '2027-04-30' })).toEqual([ids.e3, ids.e2]);
    // e3 was recorded on 2 April but counts on 10 January.
    expect(await list({ from: '2027-04-01', to: '2027-04-30' })).toEqual([]);
    expect(await list({ speciesId: ids.leek })).toEqual([ids.e5]);
    expect(await list({ parcelId: ids.otherParcel })).toEqual([]);
    expect(await list({ parcelId: ids.parcel, speciesId: ids.chaga, seasonYear: 2027 })).toEqual([ids.e4]);
  });
});

describe('ledgerTotals', () => {
  it('given 12 oz + 500 g and a −100 g correction in one season, it totals 740.1942775 g (REFERENCES.md §1 ⚙: 12 oz = 340.1942775 g)', async () => {
    const totals = await ledgerTotals(db(), { foragerId: ids.forager });
    const season2026 = totals.find((t) => t.speciesId === ids.chaga && t.seasonStart === '2026-11-01');
    // 340.1942775 + 500 − 100 = 740.1942775, worked by hand; two entries that add, one correction, one breach.
    expect(season2026).toMatchObject({ parcelName, speciesName: 'Chaga', seasonEnd: '2027-03-15', measure: 'mass', baseTotal: '740.1942775', entries: 2, corrections: 1, breaches: 1 });
  });

  it("given entries in other seasons and measures, it keeps each measure of each season on its own line and leaves out the other forager's kilogram", async () => {
    const totals = await ledgerTotals(db(), { foragerId: ids.forager });
    expect(totals.map((t) => [t.speciesName, t.seasonStart, t.seasonEnd, t.measure, t.baseTotal, t.entries])).toEqual([
      ['Chaga', '2027-11-01', '2028-03-15', 'mass', '200', 1],
      ['Chaga', '2026-11-01', '2027-03-15', 'mass', '740.1942775', 2],
      ['Wild leek', '2026-04-15', '2026-06-15', 'mass', '45', 1],
      ['Wild leek', '2026-04-15', '2026-06-15', 'plants', '3', 1],
    ]);
    // 1 kg = 1000 g (SI).
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

  it("given the forager's ledger, it writes the header and a record per entry and measure, with ISO dates and both quantities", async () => {
    const csv = ledgerCsv(await listLedger(db(), { foragerId: ids.forager }));
    const lines = csv.split('\r\n');
    expect(lines[0]).toBe(ledgerCsvHeader.join(','));
    expect(lines[0]).toBe('entry_id,counts_on,recorded_on,recorded_at,time_zone,parcel,species,scientific_name,method,quantity,unit,base_quantity,measure,season_start,season_end,breach,corrects_entry_id,root_entry_id,correction_reason,corrected_later,recorded_by,photo,latitude,longitude');
    // The header, four entries in one measure and one in two, and the empty string after the last CRLF.
    expect(lines).toHaveLength(1 + 4 + 2 + 1);
    const parcel = '"Birch Hollow, ""upper"" lot"';
    expect(lines).toContain(`${ids.e1},2026-12-20,2026-12-20,2026-12-20T15:00:00.000Z,America/New_York,${parcel},Chaga,Inonotus obliquus,strip,12,oz,340.1942775,mass,2026-11-01,2027-03-15,false,,,,false,Ada Forager,true,45.005,-74.995`);
    expect(lines).toContain(`${ids.e3},2027-01-10,2027-04-02,2027-04-02T12:00:00.000Z,America/New_York,${parcel},Chaga,Inonotus obliquus,strip,-100,g,-100,mass,2026-11-01,2027-03-15,false,${ids.e2},${ids.e2},"'=100 g was the bag, weighed again at home",false,Ada Forager,false,,`);
    expect(lines).toContain(`${ids.e5},2026-06-01,2026-06-01,2026-06-01T13:00:00.000Z,America/New_York,${parcel},Wild leek,Allium tricoccum,dig,45,g,45,mass,2026-04-15,2026-06-15,false,,,,false,Ada Forager,false,,`);
    expect(lines).toContain(`${ids.e5},2026-06-01,2026-06-01,2026-06-01T13:00:00.000Z,America/New_York,${parcel},Wild leek,Allium tricoccum,dig,3,plant,3,plants,2026-04-15,2026-06-15,false,,,,false,Ada Forager,false,,`);
  });
});

/*
 * Recorded through the use cases (check in, record, correct) at fixed instants, so that the season
 * on each entry is the one the field decided when it was written. Noon in New York: 16:00 UTC under
 * EDT (UTC−4, second Sunday of March to first Sunday of November) and 17:00 UTC under EST (UTC−5)
 * (REFERENCES §6, 15 U.S.C. 260a).
 */
describe('the season an entry is recorded in, as the ledger shows it', () => {
  // The REFERENCES §2 ring moved 0.02° east: a parcel of its own; same latitudes, so the same area on
  // the ellipsoid of revolution, 876 163.448 m² (REFERENCES §2 ⚙).
  const ring = referenceRing.map(([lon, lat]) => [Number(((lon ?? 0) + 0.02).toFixed(2)), lat ?? 0]);
  const inside: [number, number] = [-74.975, 45.005];
  let cy: Forager;

  async function harvest(at: string, speciesId: string, grams: string) {
    const now = new Date(at);
    const visit = await checkIn(db(), { forager: cy, position: inside, accuracyM: 5, now });
    if (visit.verdict !== 'clear' || !visit.visitId) throw new Error(`check-in at ${at} was ${visit.verdict}: ${visit.reasons.join(' ')}`);
    const { entry } = await recordHarvest(db(), {
      forager: cy,
      input: { idempotencyKey: crypto.randomUUID(), visitId: visit.visitId, speciesId, method: 'cut', quantities: [{ quantity: grams, unit: 'g' }], acknowledgeOver: false },
      now,
    });
    return entry.id;
  }

  async function correct(at: string, entryId: string, grams: string, reason: string) {
    const { entry } = await correctEntry(db(), { forager: cy, entryId, input: { idempotencyKey: crypto.randomUUID(), reason, quantities: [{ quantity: grams, unit: 'g' }], acknowledgeOver: false }, now: new Date(at) });
    return entry.id;
  }

  beforeAll(async () => {
    ids.cy = (await one(db().insert(users).values({ email: 'cy@ledger.test', name: 'Cy Forager' }).returning())).id;
    cy = { id: ids.cy, clubIds: [] };
    ids.seasonLot = (await one(db().insert(parcels).values({ ownerId: ids.owner, name: 'Season Lot', status: 'listed', boundary: { type: 'MultiPolygon', coordinates: [[ring]] }, areaM2: 876_163.448, timeZone: 'America/New_York' }).returning())).id;
    ids.ramps = (await one(db().insert(species).values({ slug: 'ramps-test', scientificName: 'Allium tricoccum', commonName: 'Ramps', kind: 'leaf', usualUnit: 'g' }).returning())).id;
    await db().insert(permits).values({ parcelId: ids.seasonLot, holderUserId: ids.cy, state: 'active', startsOn: '2026-01-01', endsOn: '2027-12-31' });
    // Two overlapping windows: 15 Apr – 30 Jun and 1 Jun – 31 Jul. One season, 15 Apr – 31 Jul.
    const ramps = await one(db().insert(allowances).values({ parcelId: ids.seasonLot, speciesId: ids.ramps, seasons: [{ start: '04-15', end: '06-30' }, { start: '06-01', end: '07-31' }], methods: ['cut'] }).returning());
    // A window across New Year that ends on 29 February: in a common year it ends on the 28th.
    const chaga = await one(db().insert(allowances).values({ parcelId: ids.seasonLot, speciesId: ids.chaga, seasons: [{ start: '12-01', end: '02-29' }], methods: ['cut'] }).returning());
    await db().insert(limits).values([
      { allowanceId: ramps.id, scope: 'season', quantity: '5', unit: 'kg' },
      { allowanceId: chaga.id, scope: 'season', quantity: '2', unit: 'kg' },
    ]);
    ids.r1 = await harvest('2026-05-01T16:00:00Z', ids.ramps, '100');
    ids.r2 = await harvest('2026-06-15T16:00:00Z', ids.ramps, '200');
    ids.r3 = await harvest('2026-07-15T16:00:00Z', ids.ramps, '300');
    ids.w1 = await harvest('2027-01-15T17:00:00Z', ids.chaga, '500');
    ids.w2 = await correct('2027-01-20T17:00:00Z', ids.w1, '-50', 'The bag weighed 50 g');
    ids.w3 = await correct('2027-02-03T17:00:00Z', ids.w2, '20', 'Took off 20 g too much for the bag');
  });

  const cyLedger = () => listLedger(db(), { foragerId: ids.cy });
  const cyEntry = async (id: string) => (await cyLedger()).find((r) => r.id === id);

  it('given windows 15 Apr – 30 Jun and 1 Jun – 31 Jul, an entry on 15 June (both hold it) shows the one joined season 2026-04-15 … 2026-07-31', async () => {
    // The old ledger query took the first window holding the day: 2026-04-15 … 2026-06-30.
    expect(await cyEntry(ids.r2)).toMatchObject({ countedOn: '2026-06-15', seasonStart: '2026-04-15', seasonEnd: '2026-07-31' });
  });

  it('given the same windows, entries on 1 May and 15 July (one window each) show that same one season, and the ledger totals it on one line', async () => {
    // The windows overlap, so the species is in season without a break from 15 Apr to 31 Jul: one season.
    expect(await cyEntry(ids.r1)).toMatchObject({ countedOn: '2026-05-01', seasonStart: '2026-04-15', seasonEnd: '2026-07-31' });
    expect(await cyEntry(ids.r3)).toMatchObject({ countedOn: '2026-07-15', seasonStart: '2026-04-15', seasonEnd: '2026-07-31' });
    const ramps = (await ledgerTotals(db(), { foragerId: ids.cy })).filter((t) => t.speciesId === ids.ramps);
    // 100 + 200 + 300 = 600 g, three entries.
    expect(ramps.map((t) => [t.seasonStart, t.seasonEnd, t.measure, t.baseTotal, t.entries])).toEqual([['2026-04-15', '2026-07-31', 'mass', '600', 3]]);
  });

  it('given a window 1 Dec – 29 Feb and an entry on 2027-01-15, it shows the season 2026-12-01 … 2027-02-28, never a 29 February that 2027 does not have', async () => {
    // 2027 is not divisible by 4: a common year of the Gregorian calendar, February has 28 days.
    expect(await cyEntry(ids.w1)).toMatchObject({ countedOn: '2027-01-15', seasonStart: '2026-12-01', seasonEnd: '2027-02-28' });
    expect(JSON.stringify(await cyLedger())).not.toContain('02-29');
    expect(ledgerCsv(await cyLedger())).not.toContain('02-29');
  });

  it("given a correction of a correction, it shows the root's counted day and season beside the day each was recorded", async () => {
    expect(await cyEntry(ids.w2)).toMatchObject({
      localDate: '2027-01-20', countedOn: '2027-01-15', correctsEntryId: ids.w1, rootEntryId: ids.w1, seasonStart: '2026-12-01', seasonEnd: '2027-02-28',
      quantities: [{ measure: 'mass', quantity: '-50', unit: 'g', baseQuantity: '-50' }],
    });
    expect(await cyEntry(ids.w3)).toMatchObject({
      localDate: '2027-02-03', countedOn: '2027-01-15', correctsEntryId: ids.w2, rootEntryId: ids.w1, seasonStart: '2026-12-01', seasonEnd: '2027-02-28',
      quantities: [{ measure: 'mass', quantity: '20', unit: 'g', baseQuantity: '20' }],
    });
    // Filtered by the day they count on: all three on 15 January, none in February.
    const counted = async (from: string, to: string) => (await listLedger(db(), { foragerId: ids.cy, filters: { from, to } })).map((r) => r.id);
    expect(await counted('2027-01-15', '2027-01-15')).toEqual([ids.w3, ids.w2, ids.w1]);
    expect(await counted('2027-02-01', '2027-02-28')).toEqual([]);
    // 500 − 50 + 20 = 470 g: one entry that adds, two corrections.
    const chaga = (await ledgerTotals(db(), { foragerId: ids.cy })).filter((t) => t.speciesId === ids.chaga);
    expect(chaga.map((t) => [t.seasonStart, t.seasonEnd, t.baseTotal, t.entries, t.corrections])).toEqual([['2026-12-01', '2027-02-28', '470', 1, 2]]);
  });
});
