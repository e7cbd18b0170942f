import { sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEntries, auditTallies, type AuditRow } from '../../src/db/audit.queries';
import { applyMigrations } from '../../src/db/migrations';
import { ledgerTotals, listLedger } from '../../src/db/ledger.queries';
import { seasonReport } from '../../src/db/reports.queries';
import { allowances, clubMemberships, clubs, limits, parcels, permits, species } from '../../src/db/schema';
import { ledgerCsv } from '../../src/lib/csv';
import type { Tally } from '../../src/lib/field/types';
import { seasonReportCsv } from '../../src/lib/season-report-csv';
import { checkIn } from '../../src/server/field/check-in';
import { correctEntry } from '../../src/server/field/correction';
import { previewHarvest, recordHarvest } from '../../src/server/field/harvest';
import { createThrowawayDatabase, insertUser, migrationsFolder, one, referenceBoundary, type ThrowawayDatabase } from './throwaway-database';

/*
 * One counting rule, read by everyone. A forager records entries under two permits (the club's,
 * then their own), corrects yesterday's entry the next day and corrects that correction, on a
 * species whose two season windows overlap; then the field, the preview, My ledger, both audits,
 * both season reports and both CSVs are read, and they must show the same figures.
 *
 * The parcel is America/New_York; in August it keeps EDT, UTC−4 (IANA tz data; 15 U.S.C. 260a,
 * REFERENCES §6), so 10:00 local is 14:00Z. The windows 07-01…08-31 and 08-15…09-30 both hold
 * 2026-08-20, so the season is their join, 2026-07-01…2026-09-30 (DESIGN.md: seasons recur yearly).
 *
 * Limits (grams): visit 1000, day 1000, season per forager 1800, everyone 10 000; the club permit adds a
 * club-wide cap of 2000. Nearing from 80 % (the parcel's threshold).
 *
 * What happens, all worked by hand:
 *   2026-08-20  Fern (club permit only: her own permit starts the next day) takes 600 g  [A]
 *               Gus  (club permit) takes 300 g                                           [B]
 *   2026-08-21  Fern (her own permit now, chosen before the club's) takes 500 g         [D]
 *               Fern corrects A by +200 g ("weighed again at home")                      [A′]
 *               Fern corrects A′ by −50 g ("the scale was not zeroed")                   [A″]
 *   2026-08-22  Fern (own permit) takes 250 g                                            [E]
 * A′ and A″ count where their chain began: A's day (08-20), visit and permit (the club's).
 *   Fern: 08-20: 600 + 200 − 50 = 750 g; 08-21: 500 g; 08-22: 250 g. Season 1500 g.
 *         Busiest day and busiest visit: 750 g (75 % of 1000: within).
 *         Season 1500 of 1800 g = 83.333… % → 83.3 % (half up, one decimal): nearing.
 *         Under the club's permits: 750 g (41.666… % → 41.7 % of 1800).
 *   Gus:  300 g.  Club: 750 + 300 = 1050 g of 2000 = 52.5 %.  Everyone: 1500 + 300 = 1800 g of 10 000 = 18 %.
 */
let throwaway: ThrowawayDatabase | undefined;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};

const ids = { owner: '', steward: '', fern: '', gus: '', club: '', parcel: '', chanterelle: '', clubPermit: '', fernPermit: '' };
const inside: [number, number] = [-74.995, 45.005]; // the middle of the REFERENCES §2 ring, about 550 m from every edge
const at = (iso: string) => new Date(iso);
const fern = () => ({ id: ids.fern, clubIds: [ids.club] });
const gus = () => ({ id: ids.gus, clubIds: [ids.club] });
let seq = 0;
const key = () => `agreement-${(seq += 1)}-${crypto.randomUUID()}`;

async function take(forager: { id: string; clubIds: string[] }, when: string, grams: string) {
  const visit = await checkIn(db(), { forager, position: inside, accuracyM: 5, now: at(when) });
  if (!visit.visitId) throw new Error(`no visit: ${visit.verdict} ${visit.reasons.join(' ')}`);
  const { entry } = await recordHarvest(db(), {
    forager, now: at(when),
    input: { idempotencyKey: key(), visitId: visit.visitId, speciesId: ids.chanterelle, method: 'cut', quantities: [{ quantity: grams, unit: 'g' }], acknowledgeOver: false },
  });
  return { entry, visitId: visit.visitId };
}

const entries: Record<string, string> = {};
const visits: Record<string, string> = {};

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_agreement');
  await applyMigrations(throwaway.db, migrationsFolder);
  ids.owner = await insertUser(db(), 'owner@agreement.test', 'Ora Owner', ['forager', 'landowner']);
  ids.steward = await insertUser(db(), 'steward@agreement.test', 'Sid Steward');
  ids.fern = await insertUser(db(), 'fern@agreement.test', 'Fern Forager');
  ids.gus = await insertUser(db(), 'gus@agreement.test', 'Gus Gatherer');
  ids.club = (await one(db().insert(clubs).values({ slug: 'agreement-club', name: 'Agreement Club' }).returning({ id: clubs.id }))).id;
  for (const [userId, role] of [[ids.steward, 'steward'], [ids.fern, 'member'], [ids.gus, 'member']] as const) {
    await db().insert(clubMemberships).values({ clubId: ids.club, userId, role, state: 'active', joinedAt: at('2026-01-10T12:00:00Z') });
  }
  ids.parcel = (await one(db().insert(parcels).values({ ownerId: ids.owner, name: 'Agreement Woods', status: 'listed', boundary: referenceBoundary, areaM2: 876_163.448, timeZone: 'America/New_York', nearingThresholdPercent: 80 }).returning({ id: parcels.id }))).id;
  ids.chanterelle = (await one(db().insert(species).values({ slug: 'agreement-chanterelle', scientificName: 'Cantharellus cibarius', commonName: 'Golden chanterelle', kind: 'mushroom', usualUnit: 'g', cautions: ['Jack-o-lantern mushrooms look alike.'] }).returning({ id: species.id }))).id;
  const allowance = await one(db().insert(allowances).values({ parcelId: ids.parcel, speciesId: ids.chanterelle, seasons: [{ start: '07-01', end: '08-31' }, { start: '08-15', end: '09-30' }], methods: ['cut', 'pick'] }).returning({ id: allowances.id }));
  ids.clubPermit = (await one(db().insert(permits).values({ parcelId: ids.parcel, holderClubId: ids.club, state: 'active', startsOn: '2026-06-01', endsOn: '2026-12-31' }).returning({ id: permits.id }))).id;
  ids.fernPermit = (await one(db().insert(permits).values({ parcelId: ids.parcel, holderUserId: ids.fern, state: 'active', startsOn: '2026-08-21', endsOn: '2026-12-31' }).returning({ id: permits.id }))).id;
  await db().insert(limits).values([
    { allowanceId: allowance.id, scope: 'visit', quantity: '1000', unit: 'g' },
    { allowanceId: allowance.id, scope: 'day', quantity: '1000', unit: 'g' },
    { allowanceId: allowance.id, scope: 'season', quantity: '1800', unit: 'g' },
    { allowanceId: allowance.id, scope: 'parcel-season', quantity: '10000', unit: 'g' },
    { allowanceId: allowance.id, permitId: ids.clubPermit, scope: 'club-season', quantity: '2000', unit: 'g' },
  ]);

  const a = await take(fern(), '2026-08-20T14:00:00Z', '600');
  entries.A = a.entry.id;
  visits.fern0820 = a.visitId;
  entries.B = (await take(gus(), '2026-08-20T15:00:00Z', '300')).entry.id;
  const d = await take(fern(), '2026-08-21T14:00:00Z', '500');
  entries.D = d.entry.id;
  // At home that evening (19:00 EDT = 23:00Z), no check-in: corrections of yesterday's entry.
  entries.A1 = (await correctEntry(db(), { forager: fern(), entryId: entries.A, now: at('2026-08-21T23:00:00Z'), input: { idempotencyKey: key(), reason: 'Weighed again at home', quantities: [{ quantity: '200', unit: 'g' }], acknowledgeOver: false } })).entry.id;
  entries.A2 = (await correctEntry(db(), { forager: fern(), entryId: entries.A1, now: at('2026-08-21T23:30:00Z'), input: { idempotencyKey: key(), reason: 'The scale was not zeroed', quantities: [{ quantity: '-50', unit: 'g' }], acknowledgeOver: false } })).entry.id;
  const e = await take(fern(), '2026-08-22T14:00:00Z', '250');
  entries.E = e.entry.id;
  visits.fern0822 = e.visitId;
});

afterAll(async () => {
  await throwaway?.drop();
});

/** [scope, used, percent, state] of each tally, as every reader must show it. */
const shape = (tallies: readonly Tally[] | undefined) => (tallies ?? []).map((t) => [t.scope, t.used, t.percent, t.state]);
const rowOf = (rows: AuditRow[], foragerId: string) => rows.find((r) => r.foragerId === foragerId);

// Fern on 2026-08-22, checked in under her own permit (no club-wide cap applies to her own permit).
const fernOn0822 = [
  ['visit', '250', 25, 'within'],
  ['day', '250', 25, 'within'],
  ['season', '1500', 83.3, 'nearing'],
  ['parcel-season', '1800', 18, 'within'],
];

describe('one counting rule, read everywhere', () => {
  it('given the entries, the stored facts put both corrections on the root entry A: its day, visit, permit and the joined season', async () => {
    const rows = await db().execute<{ id: string; counted_on: string; counted_visit_id: string | null; permit_id: string | null; club_id: string | null; season_start: string; season_end: string; root_entry_id: string | null }>(sql`
      select id, counted_on::text, counted_visit_id, permit_id, club_id, season_start::text, season_end::text, root_entry_id from harvest_entries where id = any(${`{${entries.A},${entries.A1},${entries.A2},${entries.D}}`}::uuid[])`);
    const byId = new Map(rows.map((r) => [r.id, r]));
    for (const id of [entries.A, entries.A1, entries.A2]) {
      expect(byId.get(id as string)).toMatchObject({ counted_on: '2026-08-20', counted_visit_id: visits.fern0820, permit_id: ids.clubPermit, club_id: ids.club, season_start: '2026-07-01', season_end: '2026-09-30' });
    }
    expect(byId.get(entries.A2 as string)?.root_entry_id).toBe(entries.A);
    expect(byId.get(entries.D as string)).toMatchObject({ counted_on: '2026-08-21', permit_id: ids.fernPermit, club_id: null, root_entry_id: null });
  });

  it('given a check-in on 2026-08-22, the field shows visit 250 g, day 250 g, season 1500 g (83.3 %, nearing), everyone 1800 g', async () => {
    const answer = await checkIn(db(), { forager: fern(), position: inside, accuracyM: 5, now: at('2026-08-22T16:00:00Z') });
    expect(answer.verdict).toBe('clear');
    expect(answer.permitId).toBe(ids.fernPermit);
    expect(shape(answer.species[0]?.tallies)).toEqual(fernOn0822);
  });

  it("given Gus's check-in under the club permit, the club-wide cap shows 1050 of 2000 g, 52.5 %", async () => {
    const answer = await checkIn(db(), { forager: gus(), position: inside, accuracyM: 5, now: at('2026-08-22T17:00:00Z') });
    expect(shape(answer.species[0]?.tallies)).toEqual([
      ['visit', '0', 0, 'within'],
      ['day', '0', 0, 'within'],
      ['season', '300', 16.7, 'within'], // 300 / 1800 = 16.666… % → 16.7
      ['parcel-season', '1800', 18, 'within'],
      ['club-season', '1050', 52.5, 'within'],
    ]);
  });

  it('given a preview of 100 g more on 2026-08-22, every tally moves by 100 g and nothing is saved', async () => {
    const before = await db().execute<{ n: number }>(sql`select count(*)::int as n from harvest_entries`);
    const projection = await previewHarvest(db(), {
      forager: fern(), now: at('2026-08-22T16:30:00Z'),
      input: { idempotencyKey: key(), visitId: visits.fern0822 as string, speciesId: ids.chanterelle, method: 'cut', quantities: [{ quantity: '100', unit: 'g' }], acknowledgeOver: false },
    });
    expect(shape(projection.tallies)).toEqual([
      ['visit', '350', 35, 'within'],
      ['day', '350', 35, 'within'],
      ['season', '1600', 88.9, 'nearing'], // 1600 / 1800 = 88.888… % → 88.9
      ['parcel-season', '1900', 19, 'within'],
    ]);
    const after = await db().execute<{ n: number }>(sql`select count(*)::int as n from harvest_entries`);
    expect(after[0]?.n).toBe(before[0]?.n);
  });

  it('given a preview inside a transaction, it holds no row lock: only AccessShareLock on what it read, no RowShareLock (FOR UPDATE/SHARE), write or advisory lock (pg_locks)', async () => {
    // Row locks live in the rows themselves; pg_locks shows them as RowShareLock (SELECT FOR UPDATE/SHARE) or
    // RowExclusiveLock (a write) on the table, and a written row as a transactionid lock (PostgreSQL manual §13.3, §54.12).
    const locks = await db().transaction(async (tx) => {
      await previewHarvest(tx, {
        forager: fern(), now: at('2026-08-22T16:30:00Z'),
        input: { idempotencyKey: key(), visitId: visits.fern0822 as string, speciesId: ids.chanterelle, method: 'cut', quantities: [{ quantity: '100', unit: 'g' }], acknowledgeOver: false },
      });
      return tx.execute<{ locktype: string; mode: string; relation: string | null }>(sql`
        select locktype, mode, relation::regclass::text as relation from pg_locks where pid = pg_backend_pid() and locktype <> 'virtualxid'`);
    });
    const read = locks.filter((l) => l.locktype === 'relation' && l.mode === 'AccessShareLock').map((l) => l.relation);
    expect(read).toEqual(expect.arrayContaining(['visits', 'parcels', 'harvest_totals']));
    expect(locks.filter((l) => !(l.locktype === 'relation' && l.mode === 'AccessShareLock'))).toEqual([]);
  });

  it("given Fern's ledger, the entries count on their stored days and the season total is 1500 g in one season line", async () => {
    const ledger = await listLedger(db(), { foragerId: ids.fern });
    const countedOn = Object.fromEntries(ledger.map((e) => [e.id, e.countedOn]));
    expect(countedOn).toEqual({ [entries.A as string]: '2026-08-20', [entries.A1 as string]: '2026-08-20', [entries.A2 as string]: '2026-08-20', [entries.D as string]: '2026-08-21', [entries.E as string]: '2026-08-22' });
    expect(new Set(ledger.map((e) => `${e.seasonStart}…${e.seasonEnd}`))).toEqual(new Set(['2026-07-01…2026-09-30']));
    const totals = await ledgerTotals(db(), { foragerId: ids.fern });
    expect(totals.map((t) => [t.seasonStart, t.seasonEnd, t.measure, t.baseTotal, t.entries, t.corrections])).toEqual([['2026-07-01', '2026-09-30', 'mass', '1500', 3, 2]]);
  });

  it("given the landowner's audit on 2026-08-22, Fern's row counts both permits: busiest visit and day 750 g, season 1500 g, as the field does", async () => {
    const audit = await auditTallies(db(), { ownerId: ids.owner }, { asOf: '2026-08-22' });
    const row = rowOf(audit.rows, ids.fern);
    expect(row?.permitIds.sort()).toEqual([ids.clubPermit, ids.fernPermit].sort());
    expect(row?.permitId).toBe(ids.fernPermit);
    expect(shape(row?.tallies)).toEqual([
      ['visit', '750', 75, 'within'],
      ['day', '750', 75, 'within'],
      ['season', '1500', 83.3, 'nearing'],
      ['parcel-season', '1800', 18, 'within'],
    ]);
    expect(row?.taken).toEqual([{ measure: 'mass', base: '1500' }]);
    expect(rowOf(audit.rows, ids.gus)?.tallies.find((t) => t.scope === 'club-season')).toMatchObject({ used: '1050', percent: 52.5 });
  });

  it("given the club's audit, Fern shows only her 750 g under the club permit (41.7 %) but the state of her whole 1500 g: nearing", async () => {
    const audit = await auditTallies(db(), { clubId: ids.club }, { asOf: '2026-08-22' });
    const row = rowOf(audit.rows, ids.fern);
    expect(row?.permitIds).toEqual([ids.clubPermit]);
    expect(shape(row?.tallies)).toEqual([
      ['visit', '750', 75, 'within'],
      ['day', '750', 75, 'within'],
      ['season', '750', 41.7, 'nearing'],
      ['parcel-season', '1800', 18, 'within'],
      ['club-season', '1050', 52.5, 'within'],
    ]);
    expect(row?.taken).toEqual([{ measure: 'mass', base: '750' }]);
    const drill = await auditEntries(db(), { clubId: ids.club }, { parcelId: ids.parcel, speciesId: ids.chanterelle, foragerId: ids.fern, asOf: '2026-08-22' });
    expect(drill?.map((e) => [e.countedOn, e.quantities.map((q) => q.quantity).join()])).toEqual([['2026-08-20', '600'], ['2026-08-20', '200'], ['2026-08-20', '-50']]);
  });

  it("given both season reports, the landowner's takes 1800 g and the club's 1050 g, with the same highest tallies as the audits", async () => {
    const owner = await seasonReport(db(), { ownerId: ids.owner, parcelId: ids.parcel }, { asOf: '2026-08-22' });
    const club = await seasonReport(db(), { clubId: ids.club, parcelId: ids.parcel }, { asOf: '2026-08-22' });
    expect(owner?.species[0]?.taken).toEqual([{ measure: 'mass', quantity: '1800', unit: 'g' }]);
    expect(club?.species[0]?.taken).toEqual([{ measure: 'mass', quantity: '1050', unit: 'g' }]);
    // Highest per scope: Fern's busiest visit and day (750 g), her season (1500 g), everyone, and the club's cap.
    expect(shape(owner?.species[0]?.tallies)).toEqual([
      ['visit', '750', 75, 'within'],
      ['day', '750', 75, 'within'],
      ['season', '1500', 83.3, 'nearing'],
      ['parcel-season', '1800', 18, 'within'],
      ['club-season', '1050', 52.5, 'within'],
    ]);
    expect(owner?.period).toEqual({ start: '2026-07-01', end: '2026-09-30' });
  });

  it("given both CSVs, the ledger's records sum to 1500 g counted on the same days, and the report's tally records carry the report's figures", async () => {
    const ledgerFile = ledgerCsv(await listLedger(db(), { foragerId: ids.fern }));
    const [head, ...records] = ledgerFile.trim().split('\r\n').map((line) => line.split(','));
    const col = (name: string) => (head ?? []).indexOf(name);
    const sum = records.reduce((grams, r) => grams + Number(r[col('base_quantity')]), 0);
    expect(sum).toBe(1500);
    expect(records.map((r) => r[col('counts_on')]).sort()).toEqual(['2026-08-20', '2026-08-20', '2026-08-20', '2026-08-21', '2026-08-22']);
    const report = await seasonReport(db(), { ownerId: ids.owner, parcelId: ids.parcel }, { asOf: '2026-08-22' });
    if (!report) throw new Error('no report');
    const [reportHead, ...reportRows] = seasonReportCsv(report).trim().split('\r\n').map((line) => line.split(','));
    const rc = (name: string) => (reportHead ?? []).indexOf(name);
    expect(reportRows.filter((r) => r[rc('section')] === 'tally').map((r) => [r[rc('scope')], r[rc('used')], Number(r[rc('percent')]), r[rc('state')]])).toEqual([
      ['visit', '750', 75, 'within'],
      ['day', '750', 75, 'within'],
      ['season', '1500', 83.3, 'nearing'],
      ['parcel-season', '1800', 18, 'within'],
      ['club-season', '1050', 52.5, 'within'],
    ]);
  });
});
