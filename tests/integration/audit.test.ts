import { eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEntries, auditSumsQuery, auditTallies, loadAuditParcels, windowsOf, type AuditRow } from '../../src/db/audit.queries';
import { answerInvitation, inviteMember, leaveClub, manageMembership } from '../../src/db/clubs.commands';
import { checkIn, recordHarvest } from '../../src/db/field.commands';
import { addFlagNote, listFlags } from '../../src/db/flags.queries';
import { applyMigrations } from '../../src/db/migrations';
import { seasonReport } from '../../src/db/reports.queries';
import {
  allowances, auditEvents, clubMemberships, clubs, flagNotes, flags, harvestEntries, limits, parcels, permits, species, type NewHarvestEntry,
} from '../../src/db/schema';
import { AppError } from '../../src/lib/errors';
import { createThrowawayDatabase, insertUser, migrationsFolder, one, referenceBoundary, refusal, type ThrowawayDatabase } from './throwaway-database';

/*
 * The stewardship audit against the real migrations. The ledger and the flags are append-only by
 * trigger, so every row lives in a throwaway database. Base quantities are written by hand in grams
 * from the exact definitions (NIST SP 811 / REFERENCES §1): 1 lb = 453.59237 g exactly (1959
 * agreement), 1 oz = 1 lb / 16 = 28.349523125 g, so 8 oz = 226.796185 g and 2 lb = 907.18474 g;
 * 1 kg = 1000 g, 0.5 kg = 500 g. The engine shows a tally's `used` in the limit's own unit rounded
 * half away from zero to 6 places, trailing zeros dropped, and its percent cut (not rounded) to 2
 * places; each expected figure below is worked that way by hand, beside the test.
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
  a1: '', a2: '', a3: '', b1: '', b2: '', c1: '', old: '',
  flagAda: '', flagCy: '', flagOld: '',
};
const asOf = '2026-12-01';
const boundary = referenceBoundary;

async function entry(values: Omit<NewHarvestEntry, 'idempotencyKey' | 'recordedBy' | 'parcelId' | 'speciesId' | 'method' | 'dimension'>) {
  const row = await one(
    db()
      .insert(harvestEntries)
      .values({ parcelId: ids.parcel, speciesId: ids.chaga, method: 'cut', dimension: 'mass', recordedBy: values.foragerId, idempotencyKey: crypto.randomUUID(), ...values })
      .returning({ id: harvestEntries.id }),
  );
  return row.id;
}

/** A decimal string without the trailing zeros of its SQL scale: '1180.3885550000000000' → '1180.388555'. */
const plain = (decimal: string) => (decimal.includes('.') ? decimal.replace(/0+$/, '').replace(/\.$/, '') : decimal);

/** Each tally of a row as [scope, used, percent, state]. */
const talliesOf = (row: AuditRow | undefined) => row?.tallies.map((t) => [t.scope, t.used, t.percent, t.state]);

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
  // Mixed units of one dimension: day in kg, season in lb, parcel-season in kg; the club's cap in lb.
  await db().insert(limits).values([
    { allowanceId: allowance.id, scope: 'day', quantity: '1', unit: 'kg' },
    { allowanceId: allowance.id, scope: 'season', quantity: '3', unit: 'lb' },
    { allowanceId: allowance.id, scope: 'parcel-season', quantity: '10', unit: 'kg' },
    { allowanceId: allowance.id, permitId: ids.clubPermit, scope: 'club-season', quantity: '4', unit: 'lb' },
  ]);

  const club = { permitId: ids.clubPermit };
  ids.a1 = await entry({ ...club, foragerId: ids.ada, quantity: '1', unit: 'lb', baseQuantity: '453.59237', localDate: '2026-06-01', position: { type: 'Point', coordinates: [-74.995, 45.005] }, recordedAt: new Date('2026-06-01T14:00:00Z') });
  ids.a2 = await entry({ ...club, foragerId: ids.ada, quantity: '8', unit: 'oz', baseQuantity: '226.796185', localDate: '2026-06-01', position: { type: 'Point', coordinates: [-74.996, 45.006] }, recordedAt: new Date('2026-06-01T15:00:00Z') });
  ids.a3 = await entry({ ...club, foragerId: ids.ada, quantity: '0.5', unit: 'kg', baseQuantity: '500', localDate: '2026-06-02', position: { type: 'Point', coordinates: [-74.997, 45.007] }, recordedAt: new Date('2026-06-02T15:00:00Z') });
  ids.b1 = await entry({ ...club, foragerId: ids.bo, quantity: '2', unit: 'lb', baseQuantity: '907.18474', localDate: '2026-07-01', recordedAt: new Date('2026-07-01T15:00:00Z') });
  // A correction nineteen days later: −1 lb = −453.59237 g, counted on 2026-07-01, its original's day.
  ids.b2 = await entry({ ...club, foragerId: ids.bo, quantity: '-1', unit: 'lb', baseQuantity: '-453.59237', localDate: '2026-07-20', correctsEntryId: ids.b1, correctionReason: 'Half the bag was bark, weighed again', recordedAt: new Date('2026-07-20T15:00:00Z') });
  ids.c1 = await entry({ permitId: ids.cyPermit, foragerId: ids.cy, quantity: '1', unit: 'kg', baseQuantity: '1000', localDate: '2026-06-01', position: { type: 'Point', coordinates: [-74.991, 45.001] }, recordedAt: new Date('2026-06-01T16:00:00Z') });
  // Last season's breach: 1.5 kg = 1500 g on 2025-12-31, over the 1 kg day limit; outside the 2026 season.
  ids.old = await entry({ ...club, foragerId: ids.ada, quantity: '1.5', unit: 'kg', baseQuantity: '1500', localDate: '2025-12-31', breach: true, acknowledgedOver: true, recordedAt: new Date('2025-12-31T16:00:00Z') });

  const flag = (values: Omit<typeof flags.$inferInsert, 'parcelId' | 'speciesId'>) => one(db().insert(flags).values({ parcelId: ids.parcel, speciesId: ids.chaga, ...values }).returning({ id: flags.id }));
  // Ada's season after a3: 1180.388555 g of 3 lb = 1360.77711 g → 86.74 %, nearing (before it: 680.388555 g, 50 %).
  ids.flagAda = (await flag({ kind: 'nearing', entryId: ids.a3, foragerId: ids.ada, permitId: ids.clubPermit, scopes: ['season'], worstState: 'nearing', createdAt: new Date('2026-06-02T15:00:00Z'),
    tallies: [{ scope: 'season', state: 'nearing', used: '2.602311', limit: '3', unit: 'lb', percent: 86.74 }] })).id;
  // Cy's day: 1000 g of 1 kg → 100 %, reached.
  ids.flagCy = (await flag({ kind: 'nearing', entryId: ids.c1, foragerId: ids.cy, permitId: ids.cyPermit, scopes: ['day'], worstState: 'reached', createdAt: new Date('2026-06-01T16:00:00Z'),
    tallies: [{ scope: 'day', state: 'reached', used: '1', limit: '1', unit: 'kg', percent: 100 }] })).id;
  ids.flagOld = (await flag({ kind: 'breach', entryId: ids.old, foragerId: ids.ada, permitId: ids.clubPermit, scopes: ['day', 'season'], worstState: 'over', createdAt: new Date('2025-12-31T16:00:00Z'),
    tallies: [{ scope: 'day', state: 'over', used: '1.5', limit: '1', unit: 'kg', percent: 150 }] })).id;
});

afterAll(async () => {
  await throwaway?.drop();
});

const rowOf = (rows: AuditRow[], foragerId: string) => rows.find((r) => r.foragerId === foragerId);

/*
 * Hand-worked figures for the 2026 season (2026-01-01 … 2026-12-31):
 *   Ada:  453.59237 + 226.796185 + 500 = 1180.388555 g. In lb: 1 lb + 8 oz = 1.5 lb, plus 500 / 453.59237 =
 *         1.10231131092… lb (1 kg ≈ 2.20462262185 lb, REFERENCES §1) = 2.60231131092… lb → 2.602311 lb;
 *         of 3 lb: 86.743… % → 86.74, nearing (at or past 80 %).
 *         Busiest day 2026-06-01: 453.59237 + 226.796185 = 680.388555 g = 0.680388555 kg → 0.680389 kg
 *         (7th place 5, rounded up); of 1 kg: 68.03 %, within.
 *   Bo:   907.18474 − 453.59237 = 453.59237 g = 1 lb exactly; of 3 lb: 33.33 %, within. Busiest day 2026-07-01:
 *         453.59237 g = 0.45359237 kg → 0.453592 kg; 45.35 %, within.
 *   Club: Ada + Bo = 1180.388555 + 453.59237 = 1633.980925 g = 3.60231131092… lb → 3.602311 lb; of 4 lb: 90.057… %
 *         → 90.05, nearing.
 *   Cy:   1000 g. Day: 1 kg of 1 kg, 100 %, reached. Season: 1000 / 453.59237 = 2.20462262185 lb → 2.204623 lb;
 *         of 3 lb: 73.487… % → 73.48, within.
 *   Everyone on the parcel: 1633.980925 + 1000 = 2633.980925 g = 2.633980925 kg → 2.633981 kg; of 10 kg: 26.33 %.
 */
const ada2026 = [
  ['day', '0.680389', 68.03, 'within'],
  ['season', '2.602311', 86.74, 'nearing'],
  ['parcel-season', '2.633981', 26.33, 'within'],
  ['club-season', '3.602311', 90.05, 'nearing'],
];
const bo2026 = [
  ['day', '0.453592', 45.35, 'within'],
  ['season', '1', 33.33, 'within'],
  ['parcel-season', '2.633981', 26.33, 'within'],
  ['club-season', '3.602311', 90.05, 'nearing'],
];
const cy2026 = [
  ['day', '1', 100, 'reached'],
  ['season', '2.204623', 73.48, 'within'],
  ['parcel-season', '2.633981', 26.33, 'within'],
];

describe('auditTallies: hand-worked totals', () => {
  it("given a member's 1 lb + 8 oz on one day and 0.5 kg on another, it totals 1180.388555 g, shown as 2.602311 lb of a 3 lb season limit (86.74 %, nearing)", async () => {
    const { rows } = await auditTallies(db(), { clubId: ids.club }, { asOf });
    const ada = rowOf(rows, ids.ada);
    expect(ada).toMatchObject({ parcelId: ids.parcel, parcelName: 'Audit Hollow', speciesId: ids.chaga, commonName: 'Chaga', season: { start: '2026-01-01', end: '2026-12-31' }, foragerName: 'Ada Member', permitId: ids.clubPermit, holderName: 'Audit Ridge Club', entries: 3, breaches: 0, state: 'nearing' });
    expect(plain(ada?.seasonTotalBase ?? '')).toBe('1180.388555');
    expect(ada?.tallies.find((t) => t.scope === 'season')).toMatchObject({ used: '2.602311', percent: 86.74, state: 'nearing', limit: { unit: 'lb', fromPermit: false } });
  });

  it('given those entries, the day tally holds the busiest day, 680.388555 g, shown as 0.680389 kg of 1 kg (68.03 %)', async () => {
    const { rows } = await auditTallies(db(), { clubId: ids.club }, { asOf });
    expect(rowOf(rows, ids.ada)?.tallies.find((t) => t.scope === 'day')).toMatchObject({ used: '0.680389', percent: 68.03, state: 'within', limit: { unit: 'kg' } });
    expect(talliesOf(rowOf(rows, ids.ada))).toEqual(ada2026);
  });

  it('given an entry from the season before (2025-12-31), it leaves it out of the 2026 season', async () => {
    const { rows } = await auditTallies(db(), { ownerId: ids.owner }, { asOf });
    // Had the 1500 g of 2025-12-31 counted, Ada's busiest day would be 1.5 kg.
    expect(rowOf(rows, ids.ada)?.entries).toBe(3);
    expect(rowOf(rows, ids.ada)?.breaches).toBe(0);
  });
});

describe('auditTallies: whose view', () => {
  it('given the club scope, the club-season tally sums every member under the club permit: 1633.980925 g = 3.602311 lb of 4 lb', async () => {
    const { rows } = await auditTallies(db(), { clubId: ids.club }, { asOf });
    for (const id of [ids.ada, ids.bo]) {
      expect(rowOf(rows, id)?.tallies.find((t) => t.scope === 'club-season')).toMatchObject({ used: '3.602311', percent: 90.05, state: 'nearing', limit: { unit: 'lb', fromPermit: true } });
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
    expect(cy).toMatchObject({ permitId: ids.cyPermit, holderName: 'Cy Forager', entries: 1, state: 'reached' });
    // A personal permit has no club-wide cap.
    expect(talliesOf(cy)).toEqual(cy2026);
    expect(talliesOf(rowOf(rows, ids.ada))).toEqual(ada2026);
    expect(plain(cy?.seasonTotalBase ?? '')).toBe('1000');
  });

  it("given another landowner, it shows nothing of this parcel", async () => {
    expect((await auditTallies(db(), { ownerId: ids.otherOwner, parcelId: ids.parcel }, { asOf })).rows).toEqual([]);
    expect((await auditTallies(db(), { ownerId: ids.otherOwner }, { asOf })).rows).toEqual([]);
  });
});

describe('auditEntries: privacy', () => {
  it('given the club scope, it returns the entries behind the tally with no position', async () => {
    const entries = await auditEntries(db(), { clubId: ids.club }, { parcelId: ids.parcel, speciesId: ids.chaga, foragerId: ids.ada, permitId: ids.clubPermit, asOf });
    expect(entries?.map((e) => e.id)).toEqual([ids.a1, ids.a2, ids.a3]);
    expect(entries?.map((e) => e.position)).toEqual([null, null, null]);
    expect(entries?.[1]).toMatchObject({ localDate: '2026-06-01', recordedAt: '2026-06-01T15:00:00.000Z', unit: 'oz', method: 'cut', breach: false });
    expect(plain(entries?.[1]?.quantity ?? '')).toBe('8');
  });

  it('given the owner scope, it returns the [longitude, latitude] each entry was written with (RFC 7946 §3.1.1)', async () => {
    const entries = await auditEntries(db(), { ownerId: ids.owner, parcelId: ids.parcel }, { parcelId: ids.parcel, speciesId: ids.chaga, foragerId: ids.ada, permitId: ids.clubPermit, asOf });
    expect(entries?.map((e) => e.position)).toEqual([[-74.995, 45.005], [-74.996, 45.006], [-74.997, 45.007]]);
  });

  it("given the club scope asking for the other forager's personal-permit entries, it returns none", async () => {
    expect(await auditEntries(db(), { clubId: ids.club }, { parcelId: ids.parcel, speciesId: ids.chaga, foragerId: ids.cy, permitId: ids.cyPermit, asOf })).toEqual([]);
    const owners = await auditEntries(db(), { ownerId: ids.owner }, { parcelId: ids.parcel, speciesId: ids.chaga, foragerId: ids.cy, permitId: ids.cyPermit, asOf });
    expect(owners?.map((e) => [e.id, e.position])).toEqual([[ids.c1, [-74.991, 45.001]]]);
  });

  it('given a parcel or species outside the view, it returns null', async () => {
    expect(await auditEntries(db(), { ownerId: ids.otherOwner }, { parcelId: ids.parcel, speciesId: ids.chaga, foragerId: ids.ada, permitId: ids.clubPermit, asOf })).toBeNull();
    expect(await auditEntries(db(), { clubId: ids.club }, { parcelId: ids.otherParcel, speciesId: ids.chaga, foragerId: ids.ada, permitId: ids.clubPermit, asOf })).toBeNull();
  });
});

describe('a correction', () => {
  it("given −1 lb recorded on 2026-07-20 against 2 lb of 2026-07-01, it counts on the original's day: busiest day 453.59237 g = 0.453592 kg, not 907.18474 g", async () => {
    const { rows } = await auditTallies(db(), { clubId: ids.club }, { asOf });
    const bo = rowOf(rows, ids.bo);
    expect(bo?.tallies.find((t) => t.scope === 'day')).toMatchObject({ used: '0.453592', percent: 45.35 });
    expect(plain(bo?.seasonTotalBase ?? '')).toBe('453.59237');
    // The correction is not a second entry taken.
    expect(bo?.entries).toBe(1);
  });

  it('given the entries behind it, the correction is listed with its reason, on the day it counts', async () => {
    const entries = await auditEntries(db(), { clubId: ids.club }, { parcelId: ids.parcel, speciesId: ids.chaga, foragerId: ids.bo, permitId: ids.clubPermit, asOf });
    expect(entries?.map((e) => e.id)).toEqual([ids.b1, ids.b2]);
    expect(entries?.[1]).toMatchObject({ correctsEntryId: ids.b1, correctionReason: 'Half the bag was bark, weighed again', localDate: '2026-07-01', recordedAt: '2026-07-20T15:00:00.000Z', unit: 'lb' });
    expect(plain(entries?.[1]?.quantity ?? '')).toBe('-1');
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
    expect(chaga?.taken?.quantity).toBe(takenIn[chaga?.taken?.unit ?? '']);
    const byScope = Object.fromEntries((chaga?.tallies ?? []).map((t) => [t.scope, [t.used, t.percent, t.state]]));
    expect(byScope).toMatchObject({ day: ['1', 100, 'reached'], season: ['2.602311', 86.74, 'nearing'], 'parcel-season': ['2.633981', 26.33, 'within'] });
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
    expect(chaga?.taken?.quantity).toBe(takenIn[chaga?.taken?.unit ?? '']);
    const byScope = Object.fromEntries((chaga?.tallies ?? []).map((t) => [t.scope, [t.used, t.percent, t.state]]));
    expect(byScope).toEqual({ day: ['0.680389', 68.03, 'within'], season: ['2.602311', 86.74, 'nearing'], 'parcel-season': ['2.633981', 26.33, 'within'], 'club-season': ['3.602311', 90.05, 'nearing'] });
  });

  it("given a date in last season, it reports that season and its breach: 1500 g on 2025-12-31 = 1.5 kg of 1 kg (150 %, over)", async () => {
    const report = await seasonReport(db(), { clubId: ids.club, parcelId: ids.parcel }, { asOf: '2025-12-31' });
    expect(report?.period).toEqual({ start: '2025-01-01', end: '2025-12-31' });
    expect(report?.breaches.map((b) => b.id)).toEqual([ids.flagOld]);
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
    expect(club[0]).toMatchObject({ kind: 'nearing', worstState: 'nearing', scopes: ['season'], parcelName: 'Audit Hollow', commonName: 'Chaga', foragerName: 'Ada Member', permitId: ids.clubPermit, entry: { id: ids.a3, unit: 'kg', localDate: '2026-06-02' }, handled: false, notes: [] });
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

describe('recordHarvest raises flags', () => {
  /*
   * Fay's own permit on a second parcel (the same ring one degree east, so the same 876 163.448 m²),
   * a day limit of 1 kg, threshold 80 %. Day totals worked by hand: 850 g = 85 % (nearing);
   * + 50 g = 900 g, 90 % (still nearing); + 100 g = 1000 g, 100 % (reached); + 200 g = 1200 g, 120 % (over).
   */
  const now = new Date('2026-06-15T15:00:00Z'); // 11:00 in New York (EDT, UTC−4: REFERENCES §6)
  const fay = { id: '', clubIds: [] as string[] };
  let visitId = '';
  let parcelId = '';

  beforeAll(async () => {
    fay.id = await insertUser(db(), 'fay@audit.test', 'Fay Forager');
    const east = [[-74, 45], [-73.99, 45], [-73.99, 45.01], [-74, 45.01], [-74, 45]];
    parcelId = (await one(db().insert(parcels).values({ ownerId: ids.owner, name: 'Flag Flats', status: 'listed', boundary: { type: 'MultiPolygon', coordinates: [[east]] }, areaM2: 876_163.448, timeZone: 'America/New_York' }).returning({ id: parcels.id }))).id;
    const allowance = await one(db().insert(allowances).values({ parcelId, speciesId: ids.chaga, seasons: [{ start: '01-01', end: '12-31' }], methods: ['cut'] }).returning({ id: allowances.id }));
    await db().insert(limits).values({ allowanceId: allowance.id, scope: 'day', quantity: '1', unit: 'kg' });
    await db().insert(permits).values({ parcelId, holderUserId: fay.id, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' });
    const answer = await checkIn(db(), { forager: fay, position: [-73.995, 45.005], accuracyM: 5, now });
    expect(answer.verdict).toBe('clear');
    visitId = answer.visitId ?? '';
  });

  const take = async (quantity: string, acknowledgeOver = false) => {
    const { entry } = await recordHarvest(db(), { forager: fay, input: { idempotencyKey: crypto.randomUUID(), visitId, speciesId: ids.chaga, method: 'cut', quantity, unit: 'g', acknowledgeOver }, now });
    if (!entry) throw new Error('no entry was recorded');
    const raised = await db().select().from(flags).where(eq(flags.entryId, entry.id));
    return { entry, raised };
  };

  it('given an entry that takes the day tally from within to nearing (850 g of 1 kg, 85 %), it raises a nearing flag for the day', async () => {
    const { raised } = await take('850');
    expect(raised.map((f) => [f.kind, f.scopes, f.worstState, f.foragerId, f.parcelId])).toEqual([['nearing', ['day'], 'nearing', fay.id, parcelId]]);
    expect(raised[0]?.tallies).toMatchObject([{ scope: 'day', state: 'nearing', used: '0.85', unit: 'kg', percent: 85 }]);
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
   * The audit sums harvest_totals (drizzle/0009), not the ledger: each window of a season must reach
   * its rows through the key and read them from the index alone. The tables here are small, so scans
   * of the whole table and bitmap scans are priced out (enable_seqscan, enable_bitmapscan; PostgreSQL
   * manual §20.7.1, section number from memory): a plan that cannot use the index keeps its scan anyway and the assertion fails.
   */
  it('given the club scope, it reads each season from harvest_totals_key by an index-only scan, bounded by parcel, species and days', async () => {
    const parcelsInView = await loadAuditParcels(db(), { clubId: ids.club }, { withTotals: true });
    const windows = windowsOf(parcelsInView, asOf);
    expect(windows.length).toBeGreaterThan(0);
    const plan = await db().transaction(async (tx) => {
      await tx.execute(sql`set local enable_seqscan = off`);
      await tx.execute(sql`set local enable_bitmapscan = off`);
      const rows = await tx.execute<{ 'QUERY PLAN': string }>(sql`explain (costs off) ${auditSumsQuery(windows, { clubId: ids.club })}`);
      return rows.map((r) => r['QUERY PLAN']).join('\n');
    });
    expect(plan).toMatch(/Index Only Scan using harvest_totals_key on harvest_totals t\n\s+Index Cond: \(\(parcel_id = w\.parcel_id\) AND \(species_id = w\.species_id\) AND \(local_date >= w\.season_start\) AND \(local_date <= w\.season_end\)\)/);
    expect(plan).not.toMatch(/Seq Scan on harvest_totals|harvest_entries/);
  });
});
