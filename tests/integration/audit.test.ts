import { and, eq, isNull, sql } from 'drizzle-orm';
import postgres from 'postgres';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEntries, auditSumsQuery, auditTallies, loadAuditParcels, windowsOf, type AuditRow } from '../../src/db/audit.queries';
import { closeDb, createDb } from '../../src/db/client';
import { answerInvitation, inviteMember, leaveClub, manageMembership } from '../../src/db/clubs.commands';
import { addFlagNote, listFlags } from '../../src/db/flags.queries';
import { ledgerTotals, listLedger } from '../../src/db/ledger.queries';
import { applyMigrations } from '../../src/db/migrations';
import { seasonReport } from '../../src/db/reports.queries';
import {
  allowances, auditEvents, checkIns, uploads, clubMemberships, clubs, flagNotes, flags, harvestEntries, harvestQuantities, harvestTotals, limits, parcels, permits, species, visits,
  type NewHarvestEntry,
} from '../../src/db/schema';
import { checkIn } from '../../src/server/field/check-in';
import { correctEntry } from '../../src/server/field/correction';
import { recordHarvest } from '../../src/server/field/harvest';
import { AppError } from '../../src/lib/errors';
import type { Forager, Tally } from '../../src/lib/field/types';
import type { Unit } from '../../src/lib/units';
import { createThrowawayDatabase, insertUser, migrationsFolder, one, referenceBoundary, refusal, type ThrowawayDatabase } from './throwaway-database';

/*
 * The stewardship audit against the real migrations. The ledger and the flags are append-only by
 * trigger, so every row lives in a throwaway database. Base quantities are written by hand in grams
 * from the exact definitions (NIST SP 811 / REFERENCES §1): 1 lb = 453.59237 g exactly (1959
 * agreement), 1 oz = 1 lb / 16 = 28.349523125 g, so 8 oz = 226.796185 g and 2 lb = 907.18474 g;
 * 1 kg = 1000 g, 0.5 kg = 500 g. The engine shows a tally's `used` in the limit's own unit rounded
 * half up to 6 places, trailing zeros dropped, and its percent rounded half up to one decimal
 * (percentOf, src/lib/units.ts); each expected figure below is worked that way by hand, beside the test.
 *
 * Entries written straight into the ledger carry the counting facts the field decides when it
 * writes one (src/lib/field/counting.ts): the day and visit they count on, the permit and its club,
 * the season occurrence (here the calendar year: the allowances run 01-01 … 12-31) and, for a
 * correction, the root of its chain. Their quantities go into harvest_quantities, one row per
 * measure; harvest_totals follows by trigger (drizzle/0011).
 */
let throwaway: ThrowawayDatabase | undefined;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};

const ids = {
  owner: '', otherOwner: '', steward: '', ada: '', bo: '', cy: '',
  club: '', parcel: '', otherParcel: '', chaga: '', clubPermit: '', cyPermit: '',
  stewardMembership: '', adaMembership: '', boMembership: '',
  a1: '', a2: '', a3: '', b1: '', b2: '', c1: '', old: '', adaPhoto: '',
  flagAda: '', flagCy: '', flagOld: '',
};
const asOf = '2026-12-01';
const boundary = referenceBoundary;
const season2026 = { seasonStart: '2026-01-01', seasonEnd: '2026-12-31' };

type EntryFacts = Omit<NewHarvestEntry, 'idempotencyKey' | 'recordedBy' | 'parcelId' | 'speciesId' | 'method' | 'seasonStart' | 'seasonEnd'> &
  Partial<Pick<NewHarvestEntry, 'seasonStart' | 'seasonEnd'>>;

/** An entry of chaga on Audit Hollow with its stored counting facts, and its one quantity: [quantity, unit, base in g worked by hand]. */
async function entry(values: EntryFacts, [quantity, unit, baseQuantity]: [string, Unit, string]) {
  const row = await one(
    db()
      .insert(harvestEntries)
      .values({ parcelId: ids.parcel, speciesId: ids.chaga, method: 'cut', recordedBy: values.foragerId, idempotencyKey: crypto.randomUUID(), ...season2026, ...values })
      .returning({ id: harvestEntries.id }),
  );
  await db().insert(harvestQuantities).values({ entryId: row.id, measure: 'mass', quantity, unit, baseQuantity });
  return row.id;
}

/** A decimal string without the trailing zeros of its SQL scale: '1180.3885550000000000' → '1180.388555'. */
const plain = (decimal: string) => (decimal.includes('.') ? decimal.replace(/0+$/, '').replace(/\.$/, '') : decimal);

/** Each tally of a row as [scope, used, percent, state]. */
const talliesOf = (row: { tallies: Tally[] } | undefined) => row?.tallies.map((t) => [t.scope, t.used, t.percent, t.state]);

/** What a row took of its species this season, in grams: its one mass line. */
const takenOf = (row: AuditRow | undefined) => row?.taken.map((t) => [t.measure, plain(t.base)]);

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_audit');
  await applyMigrations(throwaway.db, migrationsFolder);
  ids.owner = await insertUser(db(), 'owner@audit.test', 'Olive Owner', ['forager', 'landowner']);
  ids.otherOwner = await insertUser(db(), 'other-owner@audit.test', 'Otto Other', ['forager', 'landowner']);
  ids.steward = await insertUser(db(), 'steward@audit.test', 'Sue Steward');
  ids.ada = await insertUser(db(), 'ada@audit.test', 'Ada Member');
  ids.bo = await insertUser(db(), 'bo@audit.test', 'Bo Member');
  ids.cy = await insertUser(db(), 'cy@audit.test', 'Cy Forager');

  ids.club = (await one(db().insert(clubs).values({ slug: 'audit-club', name: 'Audit Ridge Club' }).returning({ id: clubs.id }))).id;
  const member = (userId: string, role: 'member' | 'steward') =>
    one(db().insert(clubMemberships).values({ clubId: ids.club, userId, role, state: 'active', joinedAt: new Date('2025-03-01T12:00:00Z') }).returning({ id: clubMemberships.id }));
  ids.stewardMembership = (await member(ids.steward, 'steward')).id;
  ids.adaMembership = (await member(ids.ada, 'member')).id;
  ids.boMembership = (await member(ids.bo, 'member')).id;

  // 876 163.448 m²: the area of this ring (REFERENCES §2 ⚙).
  ids.parcel = (await one(db().insert(parcels).values({ ownerId: ids.owner, name: 'Audit Hollow', status: 'listed', boundary, areaM2: 876_163.448, timeZone: 'America/New_York' }).returning({ id: parcels.id }))).id;
  ids.otherParcel = (await one(db().insert(parcels).values({ ownerId: ids.otherOwner, name: 'Other Lot', status: 'listed', boundary, areaM2: 876_163.448, timeZone: 'America/New_York' }).returning({ id: parcels.id }))).id;
  ids.chaga = (await one(db().insert(species).values({ slug: 'chaga-audit', scientificName: 'Inonotus obliquus', commonName: 'Chaga', kind: 'mushroom', usualUnit: 'g' }).returning({ id: species.id }))).id;
  const allowance = await one(db().insert(allowances).values({ parcelId: ids.parcel, speciesId: ids.chaga, seasons: [{ start: '01-01', end: '12-31' }], methods: ['cut'] }).returning({ id: allowances.id }));
  await db().insert(allowances).values({ parcelId: ids.otherParcel, speciesId: ids.chaga, seasons: [{ start: '01-01', end: '12-31' }], methods: ['cut'] });

  ids.clubPermit = (await one(db().insert(permits).values({ parcelId: ids.parcel, holderClubId: ids.club, state: 'active', startsOn: '2025-01-01', endsOn: '2026-12-31' }).returning({ id: permits.id }))).id;
  ids.cyPermit = (await one(db().insert(permits).values({ parcelId: ids.parcel, holderUserId: ids.cy, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' }).returning({ id: permits.id }))).id;
  // Mixed units of one measure: day in kg, season in lb, parcel-season in kg; the club's cap in lb.
  await db().insert(limits).values([
    { allowanceId: allowance.id, scope: 'day', quantity: '1', unit: 'kg' },
    { allowanceId: allowance.id, scope: 'season', quantity: '3', unit: 'lb' },
    { allowanceId: allowance.id, scope: 'parcel-season', quantity: '10', unit: 'kg' },
    { allowanceId: allowance.id, permitId: ids.clubPermit, scope: 'club-season', quantity: '4', unit: 'lb' },
  ]);

  const club = { permitId: ids.clubPermit, clubId: ids.club };
  // Ada's photo, on her third entry; Bo's first entry names it too, which gives no one a way to it.
  const photo = (storageKey: string) => ({ ownerId: ids.ada, purpose: 'harvest-photo' as const, storageKey, contentType: 'image/jpeg', byteSize: 10, sha256: '0'.repeat(64) });
  ids.adaPhoto = (await one(db().insert(uploads).values(photo('photos/audit-test/ada.jpg')).returning({ id: uploads.id }))).id;
  ids.a1 = await entry({ ...club, foragerId: ids.ada, localDate: '2026-06-01', countedOn: '2026-06-01', position: { type: 'Point', coordinates: [-74.995, 45.005] }, recordedAt: new Date('2026-06-01T14:00:00Z') }, ['1', 'lb', '453.59237']);
  ids.a2 = await entry({ ...club, foragerId: ids.ada, localDate: '2026-06-01', countedOn: '2026-06-01', position: { type: 'Point', coordinates: [-74.996, 45.006] }, recordedAt: new Date('2026-06-01T15:00:00Z') }, ['8', 'oz', '226.796185']);
  ids.a3 = await entry({ ...club, foragerId: ids.ada, localDate: '2026-06-02', countedOn: '2026-06-02', position: { type: 'Point', coordinates: [-74.997, 45.007] }, recordedAt: new Date('2026-06-02T15:00:00Z'), photoUploadId: ids.adaPhoto }, ['0.5', 'kg', '500']);
  ids.b1 = await entry({ ...club, foragerId: ids.bo, localDate: '2026-07-01', countedOn: '2026-07-01', recordedAt: new Date('2026-07-01T15:00:00Z'), photoUploadId: ids.adaPhoto }, ['2', 'lb', '907.18474']);
  // A correction nineteen days later: −1 lb = −453.59237 g, recorded on 2026-07-20 and counted on 2026-07-01, its root's day.
  ids.b2 = await entry(
    { ...club, foragerId: ids.bo, localDate: '2026-07-20', countedOn: '2026-07-01', correctsEntryId: ids.b1, rootEntryId: ids.b1, correctionReason: 'Half the bag was bark, weighed again', recordedAt: new Date('2026-07-20T15:00:00Z') },
    ['-1', 'lb', '-453.59237'],
  );
  ids.c1 = await entry({ permitId: ids.cyPermit, clubId: null, foragerId: ids.cy, localDate: '2026-06-01', countedOn: '2026-06-01', position: { type: 'Point', coordinates: [-74.991, 45.001] }, recordedAt: new Date('2026-06-01T16:00:00Z') }, ['1', 'kg', '1000']);
  // Last season's breach: 1.5 kg = 1500 g on 2025-12-31, over the 1 kg day limit; it counts in the 2025 season.
  ids.old = await entry(
    { ...club, foragerId: ids.ada, localDate: '2025-12-31', countedOn: '2025-12-31', seasonStart: '2025-01-01', seasonEnd: '2025-12-31', breach: true, acknowledgedOver: true, recordedAt: new Date('2025-12-31T16:00:00Z') },
    ['1.5', 'kg', '1500'],
  );

  const flag = (values: Omit<typeof flags.$inferInsert, 'parcelId' | 'speciesId'>) => one(db().insert(flags).values({ parcelId: ids.parcel, speciesId: ids.chaga, ...values }).returning({ id: flags.id }));
  // Ada's season after a3: 1180.388555 g of 3 lb = 1360.77711 g → 86.74371… % → 86.7, nearing (before it: 680.388555 g, 50 %).
  ids.flagAda = (await flag({ kind: 'nearing', entryId: ids.a3, foragerId: ids.ada, permitId: ids.clubPermit, scopes: ['season'], worstState: 'nearing', createdAt: new Date('2026-06-02T15:00:00Z'),
    tallies: [{ scope: 'season', measure: 'mass', state: 'nearing', used: '2.602311', limit: '3', unit: 'lb', percent: 86.7 }] })).id;
  // Cy's day: 1000 g of 1 kg → 100 %, reached.
  ids.flagCy = (await flag({ kind: 'nearing', entryId: ids.c1, foragerId: ids.cy, permitId: ids.cyPermit, scopes: ['day'], worstState: 'reached', createdAt: new Date('2026-06-01T16:00:00Z'),
    tallies: [{ scope: 'day', measure: 'mass', state: 'reached', used: '1', limit: '1', unit: 'kg', percent: 100 }] })).id;
  ids.flagOld = (await flag({ kind: 'breach', entryId: ids.old, foragerId: ids.ada, permitId: ids.clubPermit, scopes: ['day', 'season'], worstState: 'over', createdAt: new Date('2025-12-31T16:00:00Z'),
    tallies: [{ scope: 'day', measure: 'mass', state: 'over', used: '1.5', limit: '1', unit: 'kg', percent: 150 }] })).id;
});

afterAll(async () => {
  await throwaway?.drop();
});

const rowOf = (rows: AuditRow[], foragerId: string) => rows.find((r) => r.foragerId === foragerId);

/*
 * Hand-worked figures for the 2026 season (2026-01-01 … 2026-12-31). Percent = used × 100 / limit,
 * rounded half up to one decimal.
 *   Ada:  453.59237 + 226.796185 + 500 = 1180.388555 g. In lb: 1 lb + 8 oz = 1.5 lb, plus 500 / 453.59237 =
 *         1.10231131092… lb (1 kg ≈ 2.20462262185 lb, REFERENCES §1) = 2.60231131092… lb → 2.602311 lb;
 *         of 3 lb: 86.7437… % → 86.7, nearing (at or past 80 %).
 *         Busiest day 2026-06-01: 453.59237 + 226.796185 = 680.388555 g = 0.680388555 kg → 0.680389 kg
 *         (7th place 5, rounded up); of 1 kg: 68.0388… % → 68.0, within.
 *   Bo:   907.18474 − 453.59237 = 453.59237 g = 1 lb exactly; of 3 lb: 33.333… % → 33.3, within. Busiest day
 *         2026-07-01: 453.59237 g = 0.45359237 kg → 0.453592 kg; 45.359237 % → 45.4, within.
 *   Club: Ada + Bo = 1180.388555 + 453.59237 = 1633.980925 g = 3.60231131092… lb → 3.602311 lb; of 4 lb:
 *         90.0577… % → 90.1, nearing.
 *   Cy:   1000 g. Day: 1 kg of 1 kg, 100 %, reached. Season: 1000 / 453.59237 = 2.20462262185 lb → 2.204623 lb;
 *         of 3 lb: 73.4874… % → 73.5, within.
 *   Everyone on the parcel: 1633.980925 + 1000 = 2633.980925 g = 2.633980925 kg → 2.633981 kg; of 10 kg:
 *         26.3398… % → 26.3.
 */
const ada2026 = [
  ['day', '0.680389', 68, 'within'],
  ['season', '2.602311', 86.7, 'nearing'],
  ['parcel-season', '2.633981', 26.3, 'within'],
  ['club-season', '3.602311', 90.1, 'nearing'],
];
const bo2026 = [
  ['day', '0.453592', 45.4, 'within'],
  ['season', '1', 33.3, 'within'],
  ['parcel-season', '2.633981', 26.3, 'within'],
  ['club-season', '3.602311', 90.1, 'nearing'],
];
const cy2026 = [
  ['day', '1', 100, 'reached'],
  ['season', '2.204623', 73.5, 'within'],
  ['parcel-season', '2.633981', 26.3, 'within'],
];

describe('auditTallies: hand-worked totals', () => {
  it("given a member's 1 lb + 8 oz on one day and 0.5 kg on another, it totals 1180.388555 g, shown as 2.602311 lb of a 3 lb season limit (86.7 %, nearing)", async () => {
    const { rows } = await auditTallies(db(), { clubId: ids.club }, { asOf });
    const ada = rowOf(rows, ids.ada);
    expect(ada).toMatchObject({ parcelId: ids.parcel, parcelName: 'Audit Hollow', speciesId: ids.chaga, commonName: 'Chaga', season: { start: '2026-01-01', end: '2026-12-31' }, foragerName: 'Ada Member', permitId: ids.clubPermit, permitIds: [ids.clubPermit], holderName: 'Audit Ridge Club', entries: 3, breaches: 0, state: 'nearing' });
    expect(takenOf(ada)).toEqual([['mass', '1180.388555']]);
    expect(ada?.tallies.find((t) => t.scope === 'season')).toMatchObject({ measure: 'mass', used: '2.602311', percent: 86.7, state: 'nearing', limit: { unit: 'lb', fromPermit: false } });
  });

  it('given those entries, the day tally holds the busiest day, 680.388555 g, shown as 0.680389 kg of 1 kg (68.0 %)', async () => {
    const { rows } = await auditTallies(db(), { clubId: ids.club }, { asOf });
    expect(rowOf(rows, ids.ada)?.tallies.find((t) => t.scope === 'day')).toMatchObject({ used: '0.680389', percent: 68, state: 'within', limit: { unit: 'kg' } });
    expect(talliesOf(rowOf(rows, ids.ada))).toEqual(ada2026);
  });

  it('given an entry from the season before (2025-12-31), it leaves it out of the 2026 season', async () => {
    const { rows } = await auditTallies(db(), { ownerId: ids.owner }, { asOf });
    // The window 01-01 … 12-31 recurs yearly (GLOSSARY, "season"): 2025's season ends on 2025-12-31 and
    // 2026's begins on 2026-01-01. Had the 1500 g of 2025-12-31 counted, Ada would have 4 entries, 1 breach.
    expect(rowOf(rows, ids.ada)?.entries).toBe(3);
    expect(rowOf(rows, ids.ada)?.breaches).toBe(0);
  });

  it('given no date asked, it audits as of the parcel-local day of `now`: 2026-12-01T04:30Z is still 2026-11-30 in New York (EST, UTC−5: REFERENCES §6)', async () => {
    const audit = await auditTallies(db(), { clubId: ids.club }, { now: new Date('2026-12-01T04:30:00Z') });
    expect(audit.asOf).toBe('2026-11-30');
    expect(talliesOf(rowOf(audit.rows, ids.ada))).toEqual(ada2026);
  });
});

describe('auditTallies: whose view', () => {
  it('given the club scope, the club-season tally sums every member under the club permit: 1633.980925 g = 3.602311 lb of 4 lb', async () => {
    const { rows } = await auditTallies(db(), { clubId: ids.club }, { asOf });
    for (const id of [ids.ada, ids.bo]) {
      expect(rowOf(rows, id)?.tallies.find((t) => t.scope === 'club-season')).toMatchObject({ used: '3.602311', percent: 90.1, state: 'nearing', limit: { unit: 'lb', fromPermit: true } });
    }
  });

  it("given the steward's view, it leaves out the other forager's personal-permit entries", async () => {
    const { rows } = await auditTallies(db(), { clubId: ids.club }, { asOf });
    expect(rows.map((r) => r.foragerName)).toEqual(['Ada Member', 'Bo Member']);
    expect(rows.every((r) => r.permitId === ids.clubPermit)).toBe(true);
    expect(talliesOf(rowOf(rows, ids.bo))).toEqual(bo2026);
  });

  it("given the landowner's view, it includes every holder, and the parcel-season tally is everyone's 2633.980925 g = 2.633981 kg", async () => {
    const { rows } = await auditTallies(db(), { ownerId: ids.owner, parcelId: ids.parcel }, { asOf });
    expect(rows.map((r) => r.foragerName)).toEqual(['Ada Member', 'Bo Member', 'Cy Forager']);
    const cy = rowOf(rows, ids.cy);
    expect(cy).toMatchObject({ permitId: ids.cyPermit, permitIds: [ids.cyPermit], holderName: 'Cy Forager', entries: 1, state: 'reached' });
    // A personal permit has no club-wide cap.
    expect(talliesOf(cy)).toEqual(cy2026);
    expect(talliesOf(rowOf(rows, ids.ada))).toEqual(ada2026);
    expect(takenOf(cy)).toEqual([['mass', '1000']]);
  });

  it("given another landowner, it shows nothing of this parcel", async () => {
    expect((await auditTallies(db(), { ownerId: ids.otherOwner, parcelId: ids.parcel }, { asOf })).rows).toEqual([]);
    expect((await auditTallies(db(), { ownerId: ids.otherOwner }, { asOf })).rows).toEqual([]);
  });
});

describe('auditEntries: privacy', () => {
  it('given the club scope, it returns the entries behind the tally with no position', async () => {
    const entries = await auditEntries(db(), { clubId: ids.club }, { parcelId: ids.parcel, speciesId: ids.chaga, foragerId: ids.ada, asOf });
    expect(entries?.map((e) => e.id)).toEqual([ids.a1, ids.a2, ids.a3]);
    expect(entries?.map((e) => e.position)).toEqual([null, null, null]);
    expect(entries?.[1]).toMatchObject({ countedOn: '2026-06-01', localDate: '2026-06-01', recordedAt: '2026-06-01T15:00:00.000Z', method: 'cut', breach: false, quantities: [{ measure: 'mass', quantity: '8', unit: 'oz' }] });
  });

  it('given the owner scope, it returns the [longitude, latitude] each entry was written with (RFC 7946 §3.1.1)', async () => {
    const entries = await auditEntries(db(), { ownerId: ids.owner, parcelId: ids.parcel }, { parcelId: ids.parcel, speciesId: ids.chaga, foragerId: ids.ada, asOf });
    expect(entries?.map((e) => e.position)).toEqual([[-74.995, 45.005], [-74.996, 45.006], [-74.997, 45.007]]);
  });

  it("given the club scope asking for the other forager's personal-permit entries, it returns none", async () => {
    expect(await auditEntries(db(), { clubId: ids.club }, { parcelId: ids.parcel, speciesId: ids.chaga, foragerId: ids.cy, asOf })).toEqual([]);
    const owners = await auditEntries(db(), { ownerId: ids.owner }, { parcelId: ids.parcel, speciesId: ids.chaga, foragerId: ids.cy, asOf });
    expect(owners?.map((e) => [e.id, e.position])).toEqual([[ids.c1, [-74.991, 45.001]]]);
  });

  it("given an entry with its forager's photo, the steward and the landowner are told it is someone else's (the copy), the forager that it is theirs; a photo named on another's entry is not shown", async () => {
    const photoOf = (entries: Awaited<ReturnType<typeof auditEntries>>) => entries?.map((e) => [e.id, e.photo]);
    const forSteward = await auditEntries(db(), { clubId: ids.club }, { parcelId: ids.parcel, speciesId: ids.chaga, foragerId: ids.ada, asOf, viewerId: ids.steward });
    expect(photoOf(forSteward)).toEqual([[ids.a1, null], [ids.a2, null], [ids.a3, { uploadId: ids.adaPhoto, yours: false }]]);
    const forOwner = await auditEntries(db(), { ownerId: ids.owner, parcelId: ids.parcel }, { parcelId: ids.parcel, speciesId: ids.chaga, foragerId: ids.ada, asOf });
    expect(forOwner?.[2]?.photo).toEqual({ uploadId: ids.adaPhoto, yours: false });
    // Ada stewarding her own club's audit would see her original.
    const forAda = await auditEntries(db(), { clubId: ids.club }, { parcelId: ids.parcel, speciesId: ids.chaga, foragerId: ids.ada, asOf, viewerId: ids.ada });
    expect(forAda?.[2]?.photo).toEqual({ uploadId: ids.adaPhoto, yours: true });
    const bo = await auditEntries(db(), { clubId: ids.club }, { parcelId: ids.parcel, speciesId: ids.chaga, foragerId: ids.bo, asOf, viewerId: ids.steward });
    expect(bo?.map((e) => e.photo)).toEqual([null, null]);
  });

  it('given a parcel or species outside the view, it returns null', async () => {
    expect(await auditEntries(db(), { ownerId: ids.otherOwner }, { parcelId: ids.parcel, speciesId: ids.chaga, foragerId: ids.ada, asOf })).toBeNull();
    expect(await auditEntries(db(), { clubId: ids.club }, { parcelId: ids.otherParcel, speciesId: ids.chaga, foragerId: ids.ada, asOf })).toBeNull();
  });
});

describe('a correction', () => {
  it("given −1 lb recorded on 2026-07-20 against 2 lb of 2026-07-01, it counts on the original's day: busiest day 453.59237 g = 0.453592 kg, not 907.18474 g", async () => {
    const { rows } = await auditTallies(db(), { clubId: ids.club }, { asOf });
    const bo = rowOf(rows, ids.bo);
    expect(bo?.tallies.find((t) => t.scope === 'day')).toMatchObject({ used: '0.453592', percent: 45.4 });
    expect(takenOf(bo)).toEqual([['mass', '453.59237']]);
    // The correction is not a second entry taken.
    expect(bo?.entries).toBe(1);
  });

  it('given the entries behind it, the correction is listed with its reason, counted on its root\u2019s day and recorded on its own', async () => {
    const entries = await auditEntries(db(), { clubId: ids.club }, { parcelId: ids.parcel, speciesId: ids.chaga, foragerId: ids.bo, asOf });
    expect(entries?.map((e) => e.id)).toEqual([ids.b1, ids.b2]);
    expect(entries?.[1]).toMatchObject({
      correctsEntryId: ids.b1, correctionReason: 'Half the bag was bark, weighed again', countedOn: '2026-07-01', localDate: '2026-07-20', recordedAt: '2026-07-20T15:00:00.000Z',
      quantities: [{ measure: 'mass', quantity: '-1', unit: 'lb' }],
    });
  });
});

describe('seasonReport', () => {
  it("given the landowner's report, it covers every holder: 2633.980925 g taken by 3 foragers in 5 entries, the busiest day Cy's 1 kg (reached)", async () => {
    const report = await seasonReport(db(), { ownerId: ids.owner, parcelId: ids.parcel }, { asOf });
    expect(report).toMatchObject({ parcel: { id: ids.parcel, name: 'Audit Hollow', ownerName: 'Olive Owner', ownerEmail: 'owner@audit.test', timeZone: 'America/New_York' }, club: null, asOf, period: { start: '2026-01-01', end: '2026-12-31' }, visits: 0, foragers: 3, breaches: [] });
    const [chaga] = report?.species ?? [];
    expect(chaga).toMatchObject({ speciesId: ids.chaga, foragers: 3, entries: 5 });
    // 2633.980925 g, in whichever limit's unit the report chose: 2.633980925 kg → 2.633981; / 453.59237 = 5.80693… lb → 5.806934.
    const takenIn: Record<string, string> = { kg: '2.633981', lb: '5.806934' };
    expect(chaga?.taken.map((t) => [t.measure, t.quantity])).toEqual([['mass', takenIn[chaga?.taken[0]?.unit ?? '']]]);
    const byScope = Object.fromEntries((chaga?.tallies ?? []).map((t) => [t.scope, [t.used, t.percent, t.state]]));
    expect(byScope).toMatchObject({ day: ['1', 100, 'reached'], season: ['2.602311', 86.7, 'nearing'], 'parcel-season': ['2.633981', 26.3, 'within'] });
    // Ada's and Cy's 2026 flags are open; last season's breach is outside the period.
    expect(report?.openFlags).toBe(2);
  });

  it("given the club's report, it covers the club's entries only: 1633.980925 g = 1.633981 kg by 2 foragers in 4 entries, busiest day Ada's", async () => {
    const report = await seasonReport(db(), { clubId: ids.club, parcelId: ids.parcel }, { asOf });
    expect(report).toMatchObject({ club: { id: ids.club, name: 'Audit Ridge Club' }, foragers: 2, breaches: [], openFlags: 1 });
    const [chaga] = report?.species ?? [];
    expect(chaga).toMatchObject({ foragers: 2, entries: 4 });
    // 1633.980925 g = 1.633980925 kg → 1.633981; = 3.60231131… lb → 3.602311.
    const takenIn: Record<string, string> = { kg: '1.633981', lb: '3.602311' };
    expect(chaga?.taken.map((t) => [t.measure, t.quantity])).toEqual([['mass', takenIn[chaga?.taken[0]?.unit ?? '']]]);
    const byScope = Object.fromEntries((chaga?.tallies ?? []).map((t) => [t.scope, [t.used, t.percent, t.state]]));
    expect(byScope).toEqual({ day: ['0.680389', 68, 'within'], season: ['2.602311', 86.7, 'nearing'], 'parcel-season': ['2.633981', 26.3, 'within'], 'club-season': ['3.602311', 90.1, 'nearing'] });
  });

  it("given a date in last season, it reports that season and its breach: 1500 g on 2025-12-31 = 1.5 kg of 1 kg (150 %, over)", async () => {
    const report = await seasonReport(db(), { clubId: ids.club, parcelId: ids.parcel }, { asOf: '2025-12-31' });
    expect(report?.period).toEqual({ start: '2025-01-01', end: '2025-12-31' });
    expect(report?.breaches.map((b) => [b.id, b.entry.countedOn])).toEqual([[ids.flagOld, '2025-12-31']]);
    expect(report?.species[0]?.tallies.find((t) => t.scope === 'day')).toMatchObject({ used: '1.5', percent: 150, state: 'over' });
  });

  it("given a parcel outside the view, it returns null", async () => {
    expect(await seasonReport(db(), { ownerId: ids.otherOwner, parcelId: ids.parcel }, { asOf })).toBeNull();
  });
});

describe('a member who leaves', () => {
  it('given Bo leaves the club, his membership ends but his rows stay in the club audit and his entries stay counted', async () => {
    const now = new Date('2026-11-01T12:00:00Z');
    await db().transaction((tx) => leaveClub(tx, { membershipId: ids.boMembership, userId: ids.bo, now }));
    const [membership] = await db().select().from(clubMemberships).where(eq(clubMemberships.id, ids.boMembership));
    expect(membership).toMatchObject({ state: 'left', endedAt: now });
    const { rows } = await auditTallies(db(), { clubId: ids.club }, { asOf });
    expect(rows.map((r) => r.foragerName)).toEqual(['Ada Member', 'Bo Member']);
    expect(talliesOf(rowOf(rows, ids.bo))).toEqual(bo2026);
    // The club cap still holds his 453.59237 g: 3.602311 lb.
    expect(rowOf(rows, ids.ada)?.tallies.find((t) => t.scope === 'club-season')?.used).toBe('3.602311');
    const events = await db().select().from(auditEvents).where(eq(auditEvents.subjectId, ids.boMembership));
    expect(events.map((e) => [e.action, e.actorId])).toEqual([['left', ids.bo]]);
  });
});

async function appError(run: Promise<unknown>): Promise<AppError> {
  try {
    await run;
  } catch (error) {
    if (error instanceof AppError) return error;
    throw error;
  }
  throw new Error('the command succeeded where it should have been refused');
}

describe('membership rules', () => {
  const now = new Date('2026-11-02T12:00:00Z');

  it('given an active member, inviting them again answers 409 naming the e-mail', async () => {
    const error = await appError(db().transaction((tx) => inviteMember(tx, { clubId: ids.club, email: 'ada@audit.test', role: 'member', invitedBy: ids.steward, now })));
    expect([error.status, error.code, error.field]).toEqual([409, 'already-member', 'email']);
  });

  it('given the last active steward, leaving answers 409 last-steward', async () => {
    const error = await appError(db().transaction((tx) => leaveClub(tx, { membershipId: ids.stewardMembership, userId: ids.steward, now })));
    expect([error.status, error.code]).toEqual([409, 'last-steward']);
  });

  it('given the last active steward, making them a member or removing them answers 409 last-steward', async () => {
    const demote = await appError(db().transaction((tx) => manageMembership(tx, { clubId: ids.club, membershipId: ids.stewardMembership, action: 'make-member', by: ids.steward, now })));
    expect([demote.status, demote.code]).toEqual([409, 'last-steward']);
    // Removal by anyone but themselves (a steward removing themselves is told to leave instead).
    const remove = await appError(db().transaction((tx) => manageMembership(tx, { clubId: ids.club, membershipId: ids.stewardMembership, action: 'remove', by: ids.ada, now })));
    expect([remove.status, remove.code]).toEqual([409, 'last-steward']);
    const [membership] = await db().select().from(clubMemberships).where(eq(clubMemberships.id, ids.stewardMembership));
    expect(membership).toMatchObject({ role: 'steward', state: 'active', endedAt: null });
  });

  it("given an invitation, someone else answering it answers 404, and declining records the membership as left", async () => {
    const invited = await db().transaction((tx) => inviteMember(tx, { clubId: ids.club, email: 'Dee@Audit.test', role: 'member', invitedBy: ids.steward, now }));
    expect(invited).toMatchObject({ email: 'dee@audit.test', newAccount: true });
    const twice = await appError(db().transaction((tx) => inviteMember(tx, { clubId: ids.club, email: 'dee@audit.test', role: 'member', invitedBy: ids.steward, now })));
    expect([twice.status, twice.code]).toEqual([409, 'already-invited']);
    const notTheirs = await appError(db().transaction((tx) => answerInvitation(tx, { membershipId: invited.membershipId, userId: ids.ada, accept: true, now })));
    expect(notTheirs.status).toBe(404);
    const declinedAt = new Date('2026-11-03T12:00:00Z');
    await db().transaction((tx) => answerInvitation(tx, { membershipId: invited.membershipId, userId: invited.userId, accept: false, now: declinedAt }));
    const [membership] = await db().select().from(clubMemberships).where(eq(clubMemberships.id, invited.membershipId));
    expect(membership).toMatchObject({ state: 'left', endedAt: declinedAt, joinedAt: null });
  });

  it('given someone who left, inviting them again reuses their membership, and accepting makes it active', async () => {
    const again = await db().transaction((tx) => inviteMember(tx, { clubId: ids.club, email: 'bo@audit.test', role: 'member', invitedBy: ids.steward, now }));
    expect(again).toMatchObject({ membershipId: ids.boMembership, userId: ids.bo, newAccount: false });
    const [invited] = await db().select().from(clubMemberships).where(eq(clubMemberships.id, ids.boMembership));
    expect(invited).toMatchObject({ state: 'invited', endedAt: null, joinedAt: null, invitedBy: ids.steward });
    const joinedAt = new Date('2026-11-04T12:00:00Z');
    await db().transaction((tx) => answerInvitation(tx, { membershipId: ids.boMembership, userId: ids.bo, accept: true, now: joinedAt }));
    const [active] = await db().select().from(clubMemberships).where(eq(clubMemberships.id, ids.boMembership));
    expect(active).toMatchObject({ state: 'active', joinedAt, endedAt: null });
    // The trail keeps every step: left, invited, accepted.
    const events = await db().select().from(auditEvents).where(eq(auditEvents.subjectId, ids.boMembership)).orderBy(auditEvents.at);
    expect(events.map((e) => e.action)).toEqual(['left', 'invited', 'accepted']);
  });

  it('given a second active steward, the first may then step down to member', async () => {
    await db().transaction((tx) => manageMembership(tx, { clubId: ids.club, membershipId: ids.adaMembership, action: 'make-steward', by: ids.steward, now }));
    await db().transaction((tx) => manageMembership(tx, { clubId: ids.club, membershipId: ids.stewardMembership, action: 'make-member', by: ids.ada, now }));
    const roles = await db().select({ id: clubMemberships.id, role: clubMemberships.role }).from(clubMemberships).where(eq(clubMemberships.clubId, ids.club));
    expect(Object.fromEntries(roles.map((r) => [r.id, r.role]))).toMatchObject({ [ids.adaMembership]: 'steward', [ids.stewardMembership]: 'member' });
  });
});

describe('flags', () => {
  it('given the club scope, it lists the flags raised under its permits, newest first; the owner scope lists every flag on the parcel', async () => {
    const club = await listFlags(db(), { clubId: ids.club });
    expect(club.map((f) => f.id)).toEqual([ids.flagAda, ids.flagOld]);
    expect(club[0]).toMatchObject({ kind: 'nearing', worstState: 'nearing', scopes: ['season'], parcelName: 'Audit Hollow', commonName: 'Chaga', foragerName: 'Ada Member', permitId: ids.clubPermit, entry: { id: ids.a3, quantities: [{ quantity: '0.5', unit: 'kg' }], countedOn: '2026-06-02' }, handled: false, notes: [] });
    const owner = await listFlags(db(), { ownerId: ids.owner });
    expect(owner.map((f) => f.id)).toEqual([ids.flagAda, ids.flagCy, ids.flagOld]);
    expect(await listFlags(db(), { ownerId: ids.otherOwner })).toEqual([]);
  });

  it('given notes, the newest one decides whether the flag is handled', async () => {
    const handled = async () => (await listFlags(db(), { clubId: ids.club })).find((f) => f.id === ids.flagAda);
    await addFlagNote(db(), { flagId: ids.flagAda, authorId: ids.steward, note: '  Spoke with Ada; she stops for the season.  ', handled: true, now: new Date('2026-06-03T12:00:00Z') });
    expect((await handled())?.handled).toBe(true);
    await addFlagNote(db(), { flagId: ids.flagAda, authorId: ids.owner, note: 'Reopened: another bag turned up.', handled: false, now: new Date('2026-06-04T12:00:00Z') });
    expect((await handled())?.handled).toBe(false);
    await addFlagNote(db(), { flagId: ids.flagAda, authorId: ids.steward, note: 'That bag was Bo\'s, already recorded.', handled: true, now: new Date('2026-06-05T12:00:00Z') });
    const flag = await handled();
    expect(flag?.handled).toBe(true);
    expect(flag?.notes.map((n) => [n.note, n.handled, n.authorName, n.createdAt])).toEqual([
      ['Spoke with Ada; she stops for the season.', true, 'Sue Steward', '2026-06-03T12:00:00.000Z'],
      ['Reopened: another bag turned up.', false, 'Olive Owner', '2026-06-04T12:00:00.000Z'],
      ["That bag was Bo's, already recorded.", true, 'Sue Steward', '2026-06-05T12:00:00.000Z'],
    ]);
  });

  it('given a flag or a note, the database refuses to change or delete it (append-only triggers)', async () => {
    const [note] = await db().select({ id: flagNotes.id }).from(flagNotes).where(eq(flagNotes.flagId, ids.flagAda)).limit(1);
    if (!note) throw new Error('no note to refuse');
    for (const query of [
      db().update(flags).set({ worstState: 'within' }).where(eq(flags.id, ids.flagAda)),
      db().delete(flags).where(eq(flags.id, ids.flagCy)),
      db().update(flagNotes).set({ handled: false }).where(eq(flagNotes.id, note.id)),
      db().delete(flagNotes).where(eq(flagNotes.id, note.id)),
    ]) {
      const refused = await refusal(query);
      // SQLSTATE 23001 restrict_violation (PostgreSQL manual, Appendix A), raised by refuse_change().
      expect(refused.code).toBe('23001');
      expect(refused.message).toMatch(/^flag(s|_notes) is append-only: (UPDATE|DELETE) refused$/);
    }
  });

  it('given a blank note, the database refuses it (flag_notes_note check)', async () => {
    const refused = await refusal(db().insert(flagNotes).values({ flagId: ids.flagCy, authorId: ids.owner, note: '   ', handled: true }));
    expect(refused.constraint_name).toBe('flag_notes_note');
  });
});

/** A parcel of Olive's on the REFERENCES §2 ring moved east so that its west edge is at `west` (turned about the Earth's axis: the same 876 163.448 m²), in New York. */
async function ringParcel(name: string, west: number) {
  const east = Number((west + 0.01).toFixed(2));
  const ring = [[west, 45], [east, 45], [east, 45.01], [west, 45.01], [west, 45]];
  return (await one(db().insert(parcels).values({ ownerId: ids.owner, name, status: 'listed', boundary: { type: 'MultiPolygon', coordinates: [[ring]] }, areaM2: 876_163.448, timeZone: 'America/New_York' }).returning({ id: parcels.id }))).id;
}

/**
 * Chaga by cutting on a parcel, with these limits, in season 03-01 … 12-20: a window that does not
 * run into its own next occurrence across New Year, so each test below is about one thing only (the
 * calendar-year window 01-01 … 12-31 of Audit Hollow is tested above).
 */
async function chagaAllowance(parcelId: string, rows: { scope: 'visit' | 'day' | 'season' | 'parcel-season' | 'club-season'; quantity: string; unit: Unit; permitId?: string }[]) {
  const allowance = await one(db().insert(allowances).values({ parcelId, speciesId: ids.chaga, seasons: [{ start: '03-01', end: '12-20' }], methods: ['cut'] }).returning({ id: allowances.id }));
  await db().insert(limits).values(rows.map((l) => ({ allowanceId: allowance.id, ...l })));
}

/** A check-in in the middle of the parcel whose west edge is at `west`, 5 m accuracy. */
const checkInAt = (forager: Forager, west: number, now: Date) => checkIn(db(), { forager, position: [west + 0.005, 45.005], accuracyM: 5, now });

/** A harvest of chaga in grams, cut, in a visit. */
const harvest = (forager: Forager, visitId: string, grams: string, now: Date, acknowledgeOver = false) =>
  recordHarvest(db(), { forager, input: { idempotencyKey: crypto.randomUUID(), visitId, speciesId: ids.chaga, method: 'cut', quantities: [{ quantity: grams, unit: 'g' }], acknowledgeOver }, now });

/** A correction in grams (signed), with a reason. */
const correction = (forager: Forager, entryId: string, grams: string, now: Date, acknowledgeOver = false) =>
  correctEntry(db(), { forager, entryId, input: { idempotencyKey: crypto.randomUUID(), reason: 'Weighed again at home.', quantities: [{ quantity: grams, unit: 'g' }], acknowledgeOver }, now });

const chagaOf = (answer: Awaited<ReturnType<typeof checkIn>>) => answer.species.find((s) => s.speciesId === ids.chaga);

const entriesOf = async (foragerId: string) =>
  (await db().execute<{ n: number }>(sql`select count(*)::int as n from harvest_entries where forager_id = ${foragerId}`))[0]?.n;

describe('recordHarvest raises flags', () => {
  /*
   * Fay's own permit on a second parcel (the same ring one degree east, so the same 876 163.448 m²),
   * a day limit of 1 kg, threshold 80 %. Day totals worked by hand: 850 g = 85 % (nearing);
   * + 50 g = 900 g, 90 % (still nearing); + 100 g = 1000 g, 100 % (reached); + 200 g = 1200 g, 120 % (over).
   */
  const now = new Date('2026-06-15T15:00:00Z'); // 11:00 in New York (EDT, UTC−4: REFERENCES §6)
  const fay: Forager = { id: '', clubIds: [] };
  let visitId = '';
  let parcelId = '';

  beforeAll(async () => {
    fay.id = await insertUser(db(), 'fay@audit.test', 'Fay Forager');
    parcelId = await ringParcel('Flag Flats', -74);
    await chagaAllowance(parcelId, [{ scope: 'day', quantity: '1', unit: 'kg' }]);
    await db().insert(permits).values({ parcelId, holderUserId: fay.id, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' });
    const answer = await checkInAt(fay, -74, now);
    expect(answer.verdict).toBe('clear');
    visitId = answer.visitId ?? '';
  });

  const take = async (quantity: string, acknowledgeOver = false) => {
    const { entry } = await harvest(fay, visitId, quantity, now, acknowledgeOver);
    const raised = await db().select().from(flags).where(eq(flags.entryId, entry.id));
    return { entry, raised };
  };

  it('given an entry that takes the day tally from within to nearing (850 g of 1 kg, 85 %), it raises a nearing flag for the day', async () => {
    const { raised } = await take('850');
    expect(raised.map((f) => [f.kind, f.scopes, f.worstState, f.foragerId, f.parcelId])).toEqual([['nearing', ['day'], 'nearing', fay.id, parcelId]]);
    expect(raised[0]?.tallies).toMatchObject([{ scope: 'day', measure: 'mass', state: 'nearing', used: '0.85', unit: 'kg', percent: 85 }]);
    expect(plain(raised[0]?.tallies[0]?.limit ?? '')).toBe('1');
  });

  it('given an entry that keeps it nearing (900 g, 90 %), it raises none', async () => {
    expect((await take('50')).raised).toEqual([]);
  });

  it('given an entry that takes it to reached (1000 g, 100 %), it raises a flag whose worst state is reached', async () => {
    const { raised } = await take('100');
    expect(raised.map((f) => [f.kind, f.scopes, f.worstState])).toEqual([['nearing', ['day'], 'reached']]);
  });

  it('given an acknowledged entry that takes it over (1200 g, 120 %), it records a breach and raises a breach flag', async () => {
    const { entry, raised } = await take('200', true);
    expect(entry.breach).toBe(true);
    expect(raised.map((f) => [f.kind, f.scopes, f.worstState])).toEqual([['breach', ['day'], 'over']]);
    // Four entries, three flags: the 50 g that kept the tally nearing raised none.
    expect((await listFlags(db(), { ownerId: ids.owner, parcelId })).map((f) => f.kind).sort()).toEqual(['breach', 'nearing', 'nearing']);
  });
});

describe("the audit's statement over the kept totals", () => {
  /*
   * The audit sums harvest_totals (drizzle/0011), not the ledger, and reads only the parcels in view:
   * the key (parcel, species, measure, season_start, season_end, …) bounds the scan by parcel. The
   * tables here are small, so scans of the whole table and bitmap scans are priced out
   * (enable_seqscan, enable_bitmapscan; PostgreSQL manual §20.7.1, section number from memory): a
   * plan that cannot use the index keeps its scan anyway and the assertion fails.
   */
  it('given the club scope, it reads the parcels in view from harvest_totals_key, bounded by parcel, and never the ledger', async () => {
    const parcelsInView = await loadAuditParcels(db(), { clubId: ids.club }, { withTotals: true });
    const windows = windowsOf(parcelsInView, { asOf, now: new Date('2026-12-01T17:00:00Z') });
    expect(windows.length).toBeGreaterThan(0);
    const plan = await db().transaction(async (tx) => {
      await tx.execute(sql`set local enable_seqscan = off`);
      await tx.execute(sql`set local enable_bitmapscan = off`);
      const rows = await tx.execute<{ 'QUERY PLAN': string }>(sql`explain (costs off) ${auditSumsQuery(windows, { clubId: ids.club })}`);
      return rows.map((r) => r['QUERY PLAN']).join('\n');
    });
    expect(plan).toMatch(/Index (?:Only )?Scan using harvest_totals_key on harvest_totals\n\s+Index Cond: \(parcel_id = ANY/);
    expect(plan).not.toMatch(/Seq Scan on harvest_totals|harvest_entries/);
  });

  /*
   * Grouping a million kept totals by season, forager and permit makes a few thousand groups; without
   * statistics over those columns together PostgreSQL multiplies their separate counts of distinct
   * values and sorts every row on disk instead of hashing (PostgreSQL manual, "Extended Statistics":
   * multivariate n-distinct counts, which a GROUP BY over the same columns uses).
   */
  it('given migration 0014, the kept totals carry n-distinct statistics over every column the audit groups by', async () => {
    const [stats] = await db().execute<{ kinds: string; columns: string[] }>(sql`
      select s.stxkind::text as kinds, array(select a.attname::text from unnest(s.stxkeys) k join pg_attribute a on a.attrelid = s.stxrelid and a.attnum = k order by 1) as columns
      from pg_statistic_ext s where s.stxname = 'harvest_totals_groups' and s.stxrelid = 'harvest_totals'::regclass`);
    expect(stats?.kinds).toContain('d');
    expect(stats?.columns).toEqual(['club_id', 'forager_id', 'measure', 'parcel_id', 'permit_id', 'season_end', 'season_start', 'species_id']);
  });
});

/*
 * The counting model reworked (drizzle/0010, 0011; src/server/field/): each of the tests below
 * failed under the old behaviour it names, and records through the field's use cases as a forager
 * would. Each scenario has its own parcel (the ring moved a whole degree east, so check-ins never
 * land on another one) and its own forager. Instants are fixed: in July New York keeps EDT, UTC−4;
 * in December EST, UTC−5 (REFERENCES §6: DST ends there 2026-11-01T06:00Z; IANA tz data).
 */
describe('a forager holding a personal permit and a club permit on one parcel (new: audit rows per forager)', () => {
  /*
   * Gil is a member of Cedar Club, which holds a club permit on Two Permit Woods; his own permit
   * there waits for its fee in the morning, so his 10:00 check-in finds the club's and he takes
   * 600 g under it. He pays at noon; his 13:00 check-in (same visit, same day) finds his own, and
   * he takes 300 g under it. Limits: visit 1 kg, day 1 kg, season 1.1 kg, parcel-season 10 kg,
   * and under the club permit a club-season cap of 5 kg; nearing from 80 %.
   *   Whole: 600 + 300 = 900 g. Visit and day 0.9 kg of 1 kg = 90 % (nearing); season 900 / 1100 =
   *   81.818… % → 81.8 (nearing); parcel-season 900 / 10 000 = 9 % (within).
   *   Club's share: 600 g. Visit and day 0.6 kg = 60 %; season 600 / 1100 = 54.545… % → 54.5;
   *   club-season 600 / 5000 = 12 %. Alone, 60 % and 54.5 % would be within.
   */
  const gil: Forager = { id: '', clubIds: [] };
  const west = -73;
  const ids2 = { parcel: '', clubPermit: '', ownPermit: '', visit: '', underClub: '', underOwn: '' };

  beforeAll(async () => {
    gil.id = await insertUser(db(), 'gil@audit.test', 'Gil Both');
    const cedar = (await one(db().insert(clubs).values({ slug: 'cedar-club', name: 'Cedar Club' }).returning({ id: clubs.id }))).id;
    await db().insert(clubMemberships).values({ clubId: cedar, userId: gil.id, role: 'member', state: 'active', joinedAt: new Date('2026-01-10T12:00:00Z') });
    gil.clubIds = [cedar];
    ids2.parcel = await ringParcel('Two Permit Woods', west);
    ids2.clubPermit = (await one(db().insert(permits).values({ parcelId: ids2.parcel, holderClubId: cedar, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' }).returning({ id: permits.id }))).id;
    ids2.ownPermit = (await one(db().insert(permits).values({ parcelId: ids2.parcel, holderUserId: gil.id, state: 'approved', feeMinor: 2000, currency: 'usd', startsOn: '2026-01-01', endsOn: '2026-12-31' }).returning({ id: permits.id }))).id;
    await chagaAllowance(ids2.parcel, [
      { scope: 'visit', quantity: '1', unit: 'kg' },
      { scope: 'day', quantity: '1', unit: 'kg' },
      { scope: 'season', quantity: '1.1', unit: 'kg' },
      { scope: 'parcel-season', quantity: '10', unit: 'kg' },
      { scope: 'club-season', quantity: '5', unit: 'kg', permitId: ids2.clubPermit },
    ]);

    const morning = await checkInAt(gil, west, new Date('2026-07-15T14:00:00Z')); // 10:00 EDT
    expect([morning.verdict, morning.permitId]).toEqual(['clear', ids2.clubPermit]);
    ids2.visit = morning.visitId ?? '';
    ids2.underClub = (await harvest(gil, ids2.visit, '600', new Date('2026-07-15T14:30:00Z'))).entry.id;
    // He pays his own permit's fee at noon (the payment flow is not what is tested here).
    await db().update(permits).set({ state: 'active', feePaidAt: new Date('2026-07-15T16:00:00Z') }).where(eq(permits.id, ids2.ownPermit));
    const afternoon = await checkInAt(gil, west, new Date('2026-07-15T17:00:00Z')); // 13:00 EDT
    expect([afternoon.verdict, afternoon.permitId, afternoon.visitId]).toEqual(['clear', ids2.ownPermit, ids2.visit]);
    ids2.underOwn = (await harvest(gil, ids2.visit, '300', new Date('2026-07-15T17:30:00Z'))).entry.id;
  });

  it('given his two entries, the ledger counts one under the club permit (with its club) and one under his own, both in the one visit and day', async () => {
    const rows = await db()
      .select({ id: harvestEntries.id, permitId: harvestEntries.permitId, clubId: harvestEntries.clubId, countedOn: harvestEntries.countedOn, countedVisitId: harvestEntries.countedVisitId })
      .from(harvestEntries)
      .where(eq(harvestEntries.foragerId, gil.id))
      .orderBy(harvestEntries.recordedAt);
    expect(rows).toEqual([
      { id: ids2.underClub, permitId: ids2.clubPermit, clubId: gil.clubIds[0], countedOn: '2026-07-15', countedVisitId: ids2.visit },
      { id: ids2.underOwn, permitId: ids2.ownPermit, clubId: null, countedOn: '2026-07-15', countedVisitId: ids2.visit },
    ]);
  });

  it("given the landowner's audit, his one row counts both permits together — 0.9 kg of the 1 kg visit and day (90 %, nearing), 81.8 % of the season — exactly the tallies his check-in shows (before: one row per permit, 600 g and 300 g, each judged alone and within)", async () => {
    const field = chagaOf(await checkInAt(gil, west, new Date('2026-07-15T18:00:00Z'))); // 14:00 EDT, same visit
    const { rows } = await auditTallies(db(), { ownerId: ids.owner, parcelId: ids2.parcel }, { asOf: '2026-07-15' });
    expect(rows.map((r) => r.foragerId)).toEqual([gil.id]);
    const [row] = rows;
    expect(talliesOf(row)).toEqual([
      ['visit', '0.9', 90, 'nearing'],
      ['day', '0.9', 90, 'nearing'],
      ['season', '0.9', 81.8, 'nearing'],
      ['parcel-season', '0.9', 9, 'within'],
    ]);
    // The same tallies, limit for limit, as the field shows him under the permit in force (his own: no club cap).
    expect(row?.tallies).toEqual(field?.tallies);
    expect(row).toMatchObject({ permitId: ids2.ownPermit, entries: 2, breaches: 0, state: 'nearing' });
    expect([...(row?.permitIds ?? [])].sort()).toEqual([ids2.clubPermit, ids2.ownPermit].sort());
    expect(takenOf(row)).toEqual([['mass', '900']]);
  });

  it("given the club's audit, his row shows only the 600 g under the club permit (60 %, 54.5 % of the season) but the state of his whole 900 g, as the field judges it (before: judged on the club's 600 g alone, within)", async () => {
    const field = chagaOf(await checkInAt(gil, west, new Date('2026-07-15T18:30:00Z')));
    const { rows } = await auditTallies(db(), { clubId: gil.clubIds[0] ?? '' }, { asOf: '2026-07-15' });
    expect(rows.map((r) => r.foragerId)).toEqual([gil.id]);
    const [row] = rows;
    expect(talliesOf(row)).toEqual([
      ['visit', '0.6', 60, 'nearing'],
      ['day', '0.6', 60, 'nearing'],
      ['season', '0.6', 54.5, 'nearing'],
      // Everyone on the parcel, as the landowner's parcel-wide cap counts it.
      ['parcel-season', '0.9', 9, 'within'],
      ['club-season', '0.6', 12, 'within'],
    ]);
    // The per-forager states are the field's.
    const stateOf = (tallies: Tally[] | undefined, scope: string) => tallies?.find((t) => t.scope === scope)?.state;
    for (const scope of ['visit', 'day', 'season']) expect(stateOf(row?.tallies, scope)).toBe(stateOf(field?.tallies, scope));
    expect(row).toMatchObject({ permitId: ids2.clubPermit, permitIds: [ids2.clubPermit], holderName: 'Cedar Club', entries: 1, state: 'nearing' });
    expect(takenOf(row)).toEqual([['mass', '600']]);
    // The entries behind it are the club's share only.
    const entries = await auditEntries(db(), { clubId: gil.clubIds[0] ?? '' }, { parcelId: ids2.parcel, speciesId: ids.chaga, foragerId: gil.id, asOf: '2026-07-15' });
    expect(entries?.map((e) => [e.id, e.quantities])).toEqual([[ids2.underClub, [{ measure: 'mass', quantity: '600', unit: 'g' }]]]);
  });
});

describe('a correction of a correction (new: counted where its chain began)', () => {
  /*
   * Hal's own permits on Chain Ridge: P1 to 2026-07-15, P2 from 2026-07-16. Limits: visit 1 kg, day 1 kg, season 5 kg;
   * the season 2026-03-01 … 2026-12-20 (window 03-01 … 12-20).
   *   07-15 (visit V1, P1): 800 g, the root.           07-16 (visit V2, P2): 550 g.
   *   07-16 16:00 EDT: corrects the root by −300 g.    07-17, at home: corrects that correction by +100 g.
   * Both corrections count on the root's day, visit and permit: 07-15 = 800 − 300 + 100 = 600 g (V1, P1);
   * 07-16 = 550 g (V2, P2). Busiest day and visit 0.6 kg of 1 kg = 60 %; the season 600 + 550 = 1150 g =
   * 1.15 kg of 5 kg = 23 %. Before, a correction counted one step back, on the entry it corrected: the
   * second correction then counted on the first's day, visit and permit, 07-16 = 550 + 100 = 650 g.
   */
  const hal: Forager = { id: '', clubIds: [] };
  const west = -72;
  const ids3 = { parcel: '', p1: '', p2: '', v1: '', v2: '', root: '', other: '', first: '', second: '' };

  beforeAll(async () => {
    hal.id = await insertUser(db(), 'hal@audit.test', 'Hal Chain');
    ids3.parcel = await ringParcel('Chain Ridge', west);
    ids3.p1 = (await one(db().insert(permits).values({ parcelId: ids3.parcel, holderUserId: hal.id, state: 'active', startsOn: '2026-01-01', endsOn: '2026-07-15' }).returning({ id: permits.id }))).id;
    ids3.p2 = (await one(db().insert(permits).values({ parcelId: ids3.parcel, holderUserId: hal.id, state: 'active', startsOn: '2026-07-16', endsOn: '2026-12-31' }).returning({ id: permits.id }))).id;
    await chagaAllowance(ids3.parcel, [{ scope: 'visit', quantity: '1', unit: 'kg' }, { scope: 'day', quantity: '1', unit: 'kg' }, { scope: 'season', quantity: '5', unit: 'kg' }]);
    const day1 = await checkInAt(hal, west, new Date('2026-07-15T14:00:00Z'));
    expect(day1.permitId).toBe(ids3.p1);
    ids3.v1 = day1.visitId ?? '';
    ids3.root = (await harvest(hal, ids3.v1, '800', new Date('2026-07-15T14:30:00Z'))).entry.id;
    const day2 = await checkInAt(hal, west, new Date('2026-07-16T14:00:00Z'));
    expect(day2.permitId).toBe(ids3.p2);
    ids3.v2 = day2.visitId ?? '';
    ids3.other = (await harvest(hal, ids3.v2, '550', new Date('2026-07-16T14:30:00Z'))).entry.id;
    ids3.first = (await correction(hal, ids3.root, '-300', new Date('2026-07-16T20:00:00Z'))).entry.id;
    ids3.second = (await correction(hal, ids3.first, '100', new Date('2026-07-17T14:00:00Z'))).entry.id;
  });

  it("given the second correction, it stores its root's day (07-15), visit and permit, and its own recording day (07-17)", async () => {
    const [second] = await db().select().from(harvestEntries).where(eq(harvestEntries.id, ids3.second));
    expect(second).toMatchObject({
      correctsEntryId: ids3.first, rootEntryId: ids3.root, countedOn: '2026-07-15', countedVisitId: ids3.v1, permitId: ids3.p1, clubId: null,
      localDate: '2026-07-17', visitId: null, seasonStart: '2026-03-01', seasonEnd: '2026-12-20',
    });
  });

  it('given the chain, the kept totals hold 07-15 = 600 g in V1 under P1 and 07-16 = 550 g in V2 under P2', async () => {
    const rows = await db()
      .select({ countedOn: harvestTotals.countedOn, visitId: harvestTotals.visitId, permitId: harvestTotals.permitId, total: harvestTotals.total, dayTotal: harvestTotals.dayTotal, visitTotal: harvestTotals.visitTotal, entries: harvestTotals.entries })
      .from(harvestTotals)
      .where(eq(harvestTotals.foragerId, hal.id))
      .orderBy(harvestTotals.countedOn);
    expect(rows.map((r) => [r.countedOn, r.visitId, r.permitId, plain(r.total), plain(r.dayTotal), plain(r.visitTotal ?? ''), r.entries])).toEqual([
      ['2026-07-15', ids3.v1, ids3.p1, '600', '600', '600', 1],
      ['2026-07-16', ids3.v2, ids3.p2, '550', '550', '550', 1],
    ]);
  });

  it("given the chain, the audit's busiest day and visit are 07-15's 0.6 kg (60 %), not 0.65 kg, and the season 1.15 kg of 5 kg (23 %)", async () => {
    const { rows } = await auditTallies(db(), { ownerId: ids.owner, parcelId: ids3.parcel }, { asOf: '2026-07-17' });
    expect(talliesOf(rowOf(rows, hal.id))).toEqual([
      ['visit', '0.6', 60, 'within'],
      ['day', '0.6', 60, 'within'],
      ['season', '1.15', 23, 'within'],
    ]);
    expect(rowOf(rows, hal.id)).toMatchObject({ entries: 2, breaches: 0 });
  });

  it("given the chain, his ledger agrees: the entries counted on 07-15 sum to 800 − 300 + 100 = 600 g, and the season's total is 1150 g of 2 entries and 2 corrections", async () => {
    const ledger = await listLedger(db(), { foragerId: hal.id });
    const on15 = ledger.filter((e) => e.countedOn === '2026-07-15');
    expect(on15.map((e) => [e.id, e.rootEntryId, e.quantities.map((q) => q.baseQuantity)]).sort()).toEqual(
      [[ids3.root, null, ['800']], [ids3.first, ids3.root, ['-300']], [ids3.second, ids3.root, ['100']]].sort(),
    );
    expect(ledger.find((e) => e.id === ids3.second)).toMatchObject({ countedOn: '2026-07-15', localDate: '2026-07-17', seasonStart: '2026-03-01', seasonEnd: '2026-12-20' });
    const totals = await ledgerTotals(db(), { foragerId: hal.id });
    expect(totals.map((t) => [t.seasonStart, t.seasonEnd, t.measure, t.baseTotal, t.entries, t.corrections, t.breaches])).toEqual([['2026-03-01', '2026-12-20', 'mass', '1150', 2, 2, 0]]);
  });
});

describe('a correction made the next day (new: checked against the day it counts on)', () => {
  /*
   * Ivy's own permit on Next Day Knoll; limits: day 1 kg, season 5 kg. 07-15: 600 g. 07-16: 300 g, then
   * she adds 500 g to the 07-15 entry. 07-15 would be 600 + 500 = 1100 g = 1.1 kg of 1 kg = 110 %, over;
   * the season 600 + 300 + 500 = 1400 g = 1.4 kg of 5 kg = 28 %. 07-16 stays 300 g = 0.3 kg, 30 %.
   * Before, a correction was checked against the day it was made: 300 + 500 = 800 g (80 %), so it went
   * through without being acknowledged, and no breach was recorded.
   */
  const ivy: Forager = { id: '', clubIds: [] };
  const west = -71;
  const ids4 = { parcel: '', visit2: '', yesterday: '' };
  const today = new Date('2026-07-16T15:00:00Z'); // 11:00 EDT on 07-16

  beforeAll(async () => {
    ivy.id = await insertUser(db(), 'ivy@audit.test', 'Ivy Nextday');
    ids4.parcel = await ringParcel('Next Day Knoll', west);
    await db().insert(permits).values({ parcelId: ids4.parcel, holderUserId: ivy.id, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' });
    await chagaAllowance(ids4.parcel, [{ scope: 'day', quantity: '1', unit: 'kg' }, { scope: 'season', quantity: '5', unit: 'kg' }]);
    const day1 = await checkInAt(ivy, west, new Date('2026-07-15T14:00:00Z'));
    ids4.yesterday = (await harvest(ivy, day1.visitId ?? '', '600', new Date('2026-07-15T14:30:00Z'))).entry.id;
    const day2 = await checkInAt(ivy, west, new Date('2026-07-16T14:00:00Z'));
    ids4.visit2 = day2.visitId ?? '';
    await harvest(ivy, ids4.visit2, '300', new Date('2026-07-16T14:30:00Z'));
  });

  it("given +500 g on yesterday's 600 g entry, unacknowledged, it answers 409 would-go-over and saves nothing", async () => {
    const error = await appError(correction(ivy, ids4.yesterday, '500', today));
    expect([error.status, error.code, error.field]).toEqual([409, 'would-go-over', 'quantities']);
    expect(await entriesOf(ivy.id)).toBe(2);
  });

  it('given it acknowledged, it records a breach counted on yesterday (1.1 kg of 1 kg, 110 %) and raises a breach flag for the day', async () => {
    const { entry } = await correction(ivy, ids4.yesterday, '500', today, true);
    expect(entry).toMatchObject({ breach: true, acknowledgedOver: true, countedOn: '2026-07-15', localDate: '2026-07-16', correctsEntryId: ids4.yesterday });
    const raised = await db().select().from(flags).where(eq(flags.entryId, entry.id));
    expect(raised.map((f) => [f.kind, f.scopes, f.worstState, f.foragerId])).toEqual([['breach', ['day'], 'over', ivy.id]]);
    expect(raised[0]?.tallies.map((t) => [t.scope, t.used, t.unit, t.percent, t.state])).toEqual([
      ['day', '1.1', 'kg', 110, 'over'],
      ['season', '1.4', 'kg', 28, 'within'],
    ]);
    // The landowner's audit: yesterday is the busiest day, over, with one breach.
    const { rows } = await auditTallies(db(), { ownerId: ids.owner, parcelId: ids4.parcel }, { asOf: '2026-07-16' });
    expect(rowOf(rows, ivy.id)).toMatchObject({ breaches: 1, state: 'over' });
    expect(talliesOf(rowOf(rows, ivy.id))).toEqual([['day', '1.1', 110, 'over'], ['season', '1.4', 28, 'within']]);
  });

  it("given that correction, today's day tally in the field is unchanged: 300 g = 0.3 kg of 1 kg (30 %, within)", async () => {
    const field = chagaOf(await checkInAt(ivy, west, new Date('2026-07-16T16:00:00Z')));
    expect(talliesOf(field)).toEqual([['day', '0.3', 30, 'within'], ['season', '1.4', 28, 'within']]);
  });
});

describe('a visit is one local day (new: it ends at the parcel-local midnight)', () => {
  /*
   * Jo checks in on Midnight Meadow at 17:00 EST on 2026-12-10 (22:00Z). New York keeps EST, UTC−5, in
   * December (REFERENCES §6; IANA tz data), so that day ends at 2026-12-11T05:00:00Z. Before, a visit
   * stayed open until its forager checked out, and an entry after midnight went into yesterday's visit.
   */
  const jo: Forager = { id: '', clubIds: [] };
  const west = -70;
  let visitId = '';

  beforeAll(async () => {
    jo.id = await insertUser(db(), 'jo@audit.test', 'Jo Midnight');
    const parcelId = await ringParcel('Midnight Meadow', west);
    await db().insert(permits).values({ parcelId, holderUserId: jo.id, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' });
    await chagaAllowance(parcelId, [{ scope: 'day', quantity: '1', unit: 'kg' }]);
    const answer = await checkInAt(jo, west, new Date('2026-12-10T22:00:00Z'));
    expect([answer.verdict, answer.localDate]).toEqual(['clear', '2026-12-10']);
    visitId = answer.visitId ?? '';
  });

  it('given a harvest one second before midnight (04:59:59Z), it is recorded on 2026-12-10', async () => {
    const { entry } = await harvest(jo, visitId, '200', new Date('2026-12-11T04:59:59Z'));
    expect([entry.localDate, entry.countedOn, entry.visitId]).toEqual(['2026-12-10', '2026-12-10', visitId]);
  });

  it("given a harvest at the visit's local midnight (05:00:00Z) or after, it answers 409 visit-ended and saves nothing", async () => {
    for (const now of [new Date('2026-12-11T05:00:00Z'), new Date('2026-12-11T14:00:00Z')]) {
      const error = await appError(harvest(jo, visitId, '100', now));
      expect([error.status, error.code]).toEqual([409, 'visit-ended']);
    }
    expect(await entriesOf(jo.id)).toBe(1);
    const quantities = await db().execute<{ n: number }>(sql`select count(*)::int as n from harvest_quantities q join harvest_entries e on e.id = q.entry_id where e.forager_id = ${jo.id}`);
    expect(quantities[0]?.n).toBe(1);
  });
});

describe('simultaneous check-ins (new: one open visit per forager)', () => {
  /*
   * Ten check-ins of one forager on one parcel at the same moment, each on its own connection. So that
   * they truly meet, a gate holds the visits table (LOCK TABLE … IN EXCLUSIVE MODE lets reads through
   * but no writes: PostgreSQL manual, "Explicit Locking", table-level lock modes, from memory) until
   * all ten wait on a lock (pg_stat_activity.wait_event_type = 'Lock'), then lets them go at once.
   * Before, each could find no open visit and open its own (no lock, no unique index on open visits).
   */
  it('given ten check-ins of one forager on one parcel at once, it leaves exactly one open visit, and every answer names it', async () => {
    const kit: Forager = { id: await insertUser(db(), 'kit@audit.test', 'Kit Crowd'), clubIds: [] };
    const west = -69;
    const parcelId = await ringParcel('Crowded Corner', west);
    await db().insert(permits).values({ parcelId, holderUserId: kit.id, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' });
    await chagaAllowance(parcelId, [{ scope: 'day', quantity: '1', unit: 'kg' }]);
    const adminUrl = process.env.TEST_ADMIN_DATABASE_URL;
    if (!adminUrl || !throwaway) throw new Error('TEST_ADMIN_DATABASE_URL is not set');
    const name = throwaway.name;
    const url = new URL(adminUrl);
    url.pathname = `/${name}`;
    const wide = createDb(url.toString(), { max: 10, hotMax: 10 });
    const gate = postgres(url.toString(), { max: 2, onnotice: () => {} });
    try {
      const now = new Date('2026-07-15T16:00:00Z'); // 12:00 EDT
      const held = gate.begin(async (tx) => {
        await tx`lock table visits in exclusive mode`;
        for (let tries = 0; tries < 1000; tries += 1) {
          const [waiting] = await gate<{ n: number }[]>`select count(*)::int as n from pg_stat_activity where datname = ${name} and wait_event_type = 'Lock'`;
          if ((waiting?.n ?? 0) >= 10) return;
          await new Promise((resolve) => setTimeout(resolve, 10));
        }
        throw new Error('the ten check-ins never all waited at the gate');
      });
      const answers = Promise.all(Array.from({ length: 10 }, () => checkIn(wide, { forager: kit, position: [west + 0.005, 45.005], accuracyM: 5, now })));
      await held;
      const visitIds = (await answers).map((a) => a.visitId);
      const open = await db().select({ id: visits.id }).from(visits).where(and(eq(visits.foragerId, kit.id), isNull(visits.endedAt)));
      expect(open.length).toBe(1);
      expect(new Set(visitIds)).toEqual(new Set([open[0]?.id]));
      const logged = await db().select({ visitId: checkIns.visitId }).from(checkIns).where(eq(checkIns.foragerId, kit.id));
      expect(logged.map((c) => c.visitId)).toEqual(Array(10).fill(open[0]?.id));
    } finally {
      await gate.end({ timeout: 5 });
      await closeDb(wide);
    }
  });
});
