import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { and, eq, sql, type SQL } from 'drizzle-orm';
import { drizzle } from 'drizzle-orm/postgres-js';
import postgres from 'postgres';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Executor } from '../../src/db/client';
import { applyMigrations } from '../../src/db/migrations';
import { clubs, harvestedParcels, harvestEntries, harvestQuantities, harvestTotals, parcels, permits, species, visits, type NewHarvestEntry } from '../../src/db/schema';
import type { Measure, Unit } from '../../src/lib/units';
import { createThrowawayDatabase, insertUser, migrationsFolder, one, referenceBoundary, refusal, type ThrowawayDatabase } from './throwaway-database';

/*
 * harvest_totals, kept by the AFTER INSERT trigger on harvest_quantities of
 * drizzle/0011_ledger_totals_from_facts.sql, against the real migrations. The trigger only adds up
 * the counting facts stored on each entry (counted day, visit, permit, club, season occurrence), so
 * the entries here are written with those facts by hand, as the use cases would store them: a
 * correction carries its ROOT's day, visit, permit, club and season. The ledger is append-only by
 * trigger, so every row lives in a throwaway database. Mass is written in grams (base unit g, so
 * base_quantity = quantity) and plants in plants (base unit: one plant). Every expected figure is
 * worked by hand beside its test.
 */
let throwaway: ThrowawayDatabase | undefined;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};

const day1 = '2026-06-01';
const day2 = '2026-06-02';
const day3 = '2026-06-03';
const day4 = '2026-06-04';
const day5 = '2026-06-05';
const day6 = '2026-06-06';
/** The season occurrence the entries count in, unless a test says otherwise. */
const season = { seasonStart: '2026-05-01', seasonEnd: '2026-09-30' };

const ids = {
  owner: '', ada: '', bo: '', club: '',
  parcel: '', otherParcel: '', emptyParcel: '', chaga: '', leek: '', permit: '', clubPermit: '',
  v1: '', v2: '', v3: '', v4: '', v5: '', v6a: '', v6b: '',
  e100: '', c1: '',
};

async function parcel(name: string) {
  // 876 163.448 m²: the area of the REFERENCES §2 ring (GeographicLib ⚙).
  return (await one(db().insert(parcels).values({ ownerId: ids.owner, name, status: 'listed', boundary: referenceBoundary, areaM2: 876_163.448, timeZone: 'America/New_York' }).returning({ id: parcels.id }))).id;
}

/** A visit of Ada's on the parcel, already checked out (a forager has one open visit at most). */
async function visit(localDate: string, permitId = ids.permit) {
  return (await one(db().insert(visits).values({ foragerId: ids.ada, parcelId: ids.parcel, permitId, localDate, endedAt: new Date(`${localDate}T20:00:00Z`), endedBy: 'check-out' }).returning({ id: visits.id }))).id;
}

type Facts = Partial<Omit<NewHarvestEntry, 'idempotencyKey' | 'recordedBy'>> & Pick<NewHarvestEntry, 'localDate'>;
type Quantity = { quantity: string; unit: Unit; measure: Measure };
const grams = (quantity: string): Quantity[] => [{ quantity, unit: 'g', measure: 'mass' }];

/**
 * An entry of Ada's chaga on the parcel under her permit, counted on the day and in the visit it
 * was recorded in (unless the facts say otherwise), in the season above; with its quantities, each
 * base quantity equal to its quantity (g and plants are base units).
 */
function entryRow(facts: Facts): NewHarvestEntry {
  const full = {
    foragerId: ids.ada, parcelId: ids.parcel, permitId: ids.permit, clubId: null, speciesId: ids.chaga, method: 'cut' as const, visitId: null,
    countedOn: facts.localDate, countedVisitId: facts.visitId ?? null, ...season, ...facts,
  };
  return { ...full, recordedBy: full.foragerId, idempotencyKey: crypto.randomUUID() };
}

async function write(executor: Executor, facts: Facts, quantities: Quantity[]) {
  const { id } = await one(executor.insert(harvestEntries).values(entryRow(facts)).returning({ id: harvestEntries.id }));
  await executor.insert(harvestQuantities).values(quantities.map((q) => ({ entryId: id, ...q, baseQuantity: q.quantity })));
  return id;
}

const entry = (facts: Facts, quantities: Quantity[]) => write(db(), facts, quantities);

/** The names of the visits, permits and club, so that rows read as (day, visit) and sort the same on every run. */
const nameOf = (id: string | null) => (id === null ? null : (Object.entries(ids).find(([, value]) => value === id)?.[0] ?? id));

type TotalsRow = {
  day: string; visit: string | null; permit: string | null; club: string | null;
  total: string; dayTotal: string; permitDayTotal: string; visitTotal: string | null; entries: number; breaches: number;
};

/** Ada's rows of one species and measure on the parcel that match `where`, numerics without trailing zeros, sorted by day, visit and permit. */
async function totals(where: SQL | undefined, { speciesId = ids.chaga, measure = 'mass' as Measure } = {}): Promise<TotalsRow[]> {
  const rows = await db()
    .select({
      day: harvestTotals.countedOn,
      visitId: harvestTotals.visitId,
      permitId: harvestTotals.permitId,
      clubId: harvestTotals.clubId,
      total: sql<string>`trim_scale(${harvestTotals.total})::text`,
      dayTotal: sql<string>`trim_scale(${harvestTotals.dayTotal})::text`,
      permitDayTotal: sql<string>`trim_scale(${harvestTotals.permitDayTotal})::text`,
      visitTotal: sql<string | null>`trim_scale(${harvestTotals.visitTotal})::text`,
      entries: harvestTotals.entries,
      breaches: harvestTotals.breaches,
    })
    .from(harvestTotals)
    .where(and(eq(harvestTotals.foragerId, ids.ada), eq(harvestTotals.parcelId, ids.parcel), eq(harvestTotals.speciesId, speciesId), eq(harvestTotals.measure, measure), where));
  return rows
    .map(({ visitId, permitId, clubId, ...row }) => ({ ...row, visit: nameOf(visitId), permit: nameOf(permitId), club: nameOf(clubId) }))
    .sort((a, b) => `${a.day} ${a.visit ?? ''} ${a.permit ?? ''}`.localeCompare(`${b.day} ${b.visit ?? ''} ${b.permit ?? ''}`));
}

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_totals');
  await applyMigrations(throwaway.db, migrationsFolder);
  ids.owner = await insertUser(db(), 'owner@totals.test', 'Olive Owner', ['forager', 'landowner']);
  ids.ada = await insertUser(db(), 'ada@totals.test', 'Ada Forager');
  ids.bo = await insertUser(db(), 'bo@totals.test', 'Bo Forager');
  ids.club = (await one(db().insert(clubs).values({ slug: 'totals-club', name: 'Totals Club' }).returning({ id: clubs.id }))).id;
  ids.parcel = await parcel('Totals Hollow');
  ids.otherParcel = await parcel('Other Lot');
  ids.emptyParcel = await parcel('Empty Lot');
  ids.chaga = (await one(db().insert(species).values({ slug: 'chaga-totals', scientificName: 'Inonotus obliquus', commonName: 'Chaga', kind: 'mushroom', usualUnit: 'g' }).returning({ id: species.id }))).id;
  ids.leek = (await one(db().insert(species).values({ slug: 'leek-totals', scientificName: 'Allium tricoccum', commonName: 'Wild leek', kind: 'leaf', usualUnit: 'plant' }).returning({ id: species.id }))).id;
  ids.permit = (await one(db().insert(permits).values({ parcelId: ids.parcel, holderUserId: ids.ada, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' }).returning({ id: permits.id }))).id;
  ids.clubPermit = (await one(db().insert(permits).values({ parcelId: ids.parcel, holderClubId: ids.club, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' }).returning({ id: permits.id }))).id;
  ids.v1 = await visit(day1);
  ids.v2 = await visit(day1);
  ids.v3 = await visit(day2);
  // The same day under the club's permit, in a visit of its own.
  ids.v4 = await visit(day2, ids.clubPermit);
  ids.v5 = await visit(day4);
  ids.v6a = await visit(day6);
  ids.v6b = await visit(day6);
});

afterAll(async () => {
  await throwaway?.drop();
});

describe('harvest_totals kept by the trigger on harvest_quantities', () => {
  it('given two visits on one day, it keeps a row per visit with the whole day on each and each visit its own', async () => {
    ids.e100 = await entry({ visitId: ids.v1, localDate: day1 }, grams('100'));
    await entry({ visitId: ids.v1, localDate: day1 }, grams('50'));
    await entry({ visitId: ids.v2, localDate: day1 }, grams('30'));
    // (day1, v1): 100 + 50 = 150 g, 2 entries; (day1, v2): 30 g, 1 entry.
    // Day 1 on both rows, under any permit and under the one permit: 150 + 30 = 180 g. Visit v1: 150 g; v2: 30 g.
    expect(await totals(eq(harvestTotals.countedOn, day1))).toEqual([
      { day: day1, visit: 'v1', permit: 'permit', club: null, total: '150', dayTotal: '180', permitDayTotal: '180', visitTotal: '150', entries: 2, breaches: 0 },
      { day: day1, visit: 'v2', permit: 'permit', club: null, total: '30', dayTotal: '180', permitDayTotal: '180', visitTotal: '30', entries: 1, breaches: 0 },
    ]);
  });

  it("given two permits on one day, day_total counts both on every row and permit_day_total each permit's own", async () => {
    await entry({ visitId: ids.v3, localDate: day2 }, grams('40'));
    await entry({ visitId: ids.v4, localDate: day2, permitId: ids.clubPermit, clubId: ids.club }, grams('25'));
    // Written last, under the personal permit: the club row's day_total must follow, its permit_day_total must not.
    await entry({ visitId: ids.v3, localDate: day2 }, grams('10'));
    // Personal (v3): 40 + 10 = 50 g, 2 entries. Club (v4): 25 g, 1 entry.
    // Day 2 under any permit, on both rows: 50 + 25 = 75 g. Under each permit: 50 g and 25 g. Each visit its own: 50 g, 25 g.
    expect(await totals(eq(harvestTotals.countedOn, day2))).toEqual([
      { day: day2, visit: 'v3', permit: 'permit', club: null, total: '50', dayTotal: '75', permitDayTotal: '50', visitTotal: '50', entries: 2, breaches: 0 },
      { day: day2, visit: 'v4', permit: 'clubPermit', club: 'club', total: '25', dayTotal: '75', permitDayTotal: '25', visitTotal: '25', entries: 1, breaches: 0 },
    ]);
  });

  it("given a correction recorded on a later day in another visit, it counts it on its root's day and visit (the facts it copied)", async () => {
    // Recorded on day 4 during visit v5; its stored facts are its root's (e100): day 1, visit v1, Ada's permit.
    ids.c1 = await entry(
      { visitId: ids.v5, localDate: day4, countedOn: day1, countedVisitId: ids.v1, correctsEntryId: ids.e100, rootEntryId: ids.e100, correctionReason: 'Weighed again without the bark' },
      grams('-20'),
    );
    // Counted on (day1, v1): 150 − 20 = 130 g; still 2 entries (a correction is not one).
    // Day 1 on both rows: 130 + 30 = 160 g. Visit v1: 130 g; v2 unchanged, 30 g.
    expect(await totals(eq(harvestTotals.countedOn, day1))).toEqual([
      { day: day1, visit: 'v1', permit: 'permit', club: null, total: '130', dayTotal: '160', permitDayTotal: '160', visitTotal: '130', entries: 2, breaches: 0 },
      { day: day1, visit: 'v2', permit: 'permit', club: null, total: '30', dayTotal: '160', permitDayTotal: '160', visitTotal: '30', entries: 1, breaches: 0 },
    ]);
    // Nothing on the day or the visit it was recorded in.
    expect(await totals(eq(harvestTotals.countedOn, day4))).toEqual([]);
    expect(await totals(eq(harvestTotals.visitId, ids.v5))).toEqual([]);
  });

  it("given a correction of that correction, recorded on yet another day with no visit, it counts it on the root's day and visit too", async () => {
    await entry(
      { visitId: null, localDate: day5, countedOn: day1, countedVisitId: ids.v1, correctsEntryId: ids.c1, rootEntryId: ids.e100, correctionReason: 'Took too much off: 5 g of it was chaga' },
      grams('5'),
    );
    // (day1, v1): 130 + 5 = 135 g; day 1: 135 + 30 = 165 g; visit v1: 135 g. Still 2 entries.
    expect(await totals(eq(harvestTotals.countedOn, day1))).toEqual([
      { day: day1, visit: 'v1', permit: 'permit', club: null, total: '135', dayTotal: '165', permitDayTotal: '165', visitTotal: '135', entries: 2, breaches: 0 },
      { day: day1, visit: 'v2', permit: 'permit', club: null, total: '30', dayTotal: '165', permitDayTotal: '165', visitTotal: '30', entries: 1, breaches: 0 },
    ]);
    expect(await totals(eq(harvestTotals.countedOn, day5))).toEqual([]);
  });

  it('given one entry in two measures (grams and plants) beside entries in one, it keeps each measure on rows of its own and leaves the other species alone', async () => {
    // "200 g or 50 plants": an entry gives both. A breach counts on both of its measures' rows.
    await entry({ speciesId: ids.leek, method: 'dig', visitId: ids.v1, localDate: day1, breach: true, acknowledgedOver: true }, [
      { quantity: '150', unit: 'g', measure: 'mass' },
      { quantity: '30', unit: 'plant', measure: 'plants' },
    ]);
    await entry({ speciesId: ids.leek, method: 'dig', visitId: ids.v1, localDate: day1 }, grams('50'));
    await entry({ speciesId: ids.leek, method: 'dig', visitId: ids.v2, localDate: day1 }, [{ quantity: '10', unit: 'plant', measure: 'plants' }]);
    // Mass (day1, v1): 150 + 50 = 200 g, 2 entries, 1 breach; day and visit 200 g. No mass in v2.
    expect(await totals(eq(harvestTotals.countedOn, day1), { speciesId: ids.leek, measure: 'mass' })).toEqual([
      { day: day1, visit: 'v1', permit: 'permit', club: null, total: '200', dayTotal: '200', permitDayTotal: '200', visitTotal: '200', entries: 2, breaches: 1 },
    ]);
    // Plants (day1, v1): 30, 1 entry, 1 breach; (day1, v2): 10, 1 entry. Day: 30 + 10 = 40 plants; each visit its own.
    expect(await totals(eq(harvestTotals.countedOn, day1), { speciesId: ids.leek, measure: 'plants' })).toEqual([
      { day: day1, visit: 'v1', permit: 'permit', club: null, total: '30', dayTotal: '40', permitDayTotal: '40', visitTotal: '30', entries: 1, breaches: 1 },
      { day: day1, visit: 'v2', permit: 'permit', club: null, total: '10', dayTotal: '40', permitDayTotal: '40', visitTotal: '10', entries: 1, breaches: 0 },
    ]);
    // Chaga's mass on day 1 as after the second correction: 135 g and 30 g, day 165 g.
    expect((await totals(eq(harvestTotals.countedOn, day1))).map((r) => [r.visit, r.total, r.dayTotal, r.visitTotal])).toEqual([
      ['v1', '135', '165', '135'],
      ['v2', '30', '165', '30'],
    ]);
  });

  it('given a negative quantity on an entry that corrects nothing, the trigger refuses it (check_violation 23514) and nothing is added', async () => {
    const key = crypto.randomUUID();
    const error = await refusal(
      db().transaction(async (tx) => {
        const { id } = await one(tx.insert(harvestEntries).values({ ...entryRow({ visitId: ids.v1, localDate: day1 }), idempotencyKey: key }).returning({ id: harvestEntries.id }));
        await tx.insert(harvestQuantities).values({ entryId: id, measure: 'mass', quantity: '-5', unit: 'g', baseQuantity: '-5' });
      }),
    );
    // SQLSTATE 23514 check_violation (PostgreSQL manual, Appendix A, from memory); the message is the trigger's.
    expect(error.code).toBe('23514');
    expect(error.message).toMatch(/only a correction may take away/);
    expect(await db().select({ id: harvestEntries.id }).from(harvestEntries).where(eq(harvestEntries.idempotencyKey, key))).toEqual([]);
    expect((await totals(eq(harvestTotals.countedOn, day1))).map((r) => r.total)).toEqual(['135', '30']);
  });

  it('given two entries with neither permit nor visit on one day, it keeps them on one row with no visit total', async () => {
    await entry({ permitId: null, visitId: null, localDate: day5 }, grams('10'));
    await entry({ permitId: null, visitId: null, localDate: day5 }, grams('15'));
    // NULLS NOT DISTINCT: one row, 10 + 15 = 25 g, 2 entries; the day is that row alone, 25 g; no visit, no visit total.
    // (The second correction, recorded on day 5, counts on day 1 and is not here.)
    expect(await totals(eq(harvestTotals.countedOn, day5))).toEqual([
      { day: day5, visit: null, permit: null, club: null, total: '25', dayTotal: '25', permitDayTotal: '25', visitTotal: null, entries: 2, breaches: 0 },
    ]);
  });

  it('given two entries of one day stored in two season occurrences (the windows were changed that day), it keeps a row per occurrence and the whole day on both', async () => {
    await entry({ visitId: null, localDate: day3 }, grams('12'));
    await entry({ visitId: null, localDate: day3, seasonStart: '2026-05-01', seasonEnd: '2026-08-31' }, grams('7'));
    const rows = await db()
      .select({ seasonEnd: harvestTotals.seasonEnd, total: sql<string>`trim_scale(${harvestTotals.total})::text`, dayTotal: sql<string>`trim_scale(${harvestTotals.dayTotal})::text` })
      .from(harvestTotals)
      .where(and(eq(harvestTotals.foragerId, ids.ada), eq(harvestTotals.speciesId, ids.chaga), eq(harvestTotals.countedOn, day3)))
      .orderBy(harvestTotals.seasonEnd);
    // 12 g in the occurrence ending 30 Sept, 7 g in the one ending 31 Aug; the day, 12 + 7 = 19 g, on both.
    expect(rows).toEqual([
      { seasonEnd: '2026-08-31', total: '7', dayTotal: '19' },
      { seasonEnd: '2026-09-30', total: '12', dayTotal: '19' },
    ]);
  });

  // At READ COMMITTED each statement sees the rows committed before it began (PostgreSQL manual
  // §13.2.1, from memory), so B's statements after the lock see A's totals.
  it('given two transactions writing one forager’s parcel, species and day in two visits at once, it adds the second after the first', async () => {
    const admin = process.env.TEST_ADMIN_DATABASE_URL;
    if (!admin || !throwaway) throw new Error('TEST_ADMIN_DATABASE_URL is not set');
    const url = new URL(admin);
    url.pathname = `/${throwaway.name}`;
    const clientA = postgres(url.toString(), { max: 1, onnotice: () => {} });
    const clientB = postgres(url.toString(), { max: 1, onnotice: () => {} });
    let commitA = () => {};
    const aMayCommit = new Promise<void>((resolve) => (commitA = resolve));
    let aInserted = () => {};
    const aHasInserted = new Promise<void>((resolve) => (aInserted = resolve));
    let bPid: number | undefined;
    try {
      const aDone = drizzle(clientA).transaction(async (tx) => {
        await write(tx as unknown as Executor, { visitId: ids.v6a, localDate: day6 }, grams('70'));
        aInserted();
        await aMayCommit;
      });
      await Promise.race([aHasInserted, aDone]);
      const bDone = drizzle(clientB).transaction(async (tx) => {
        const [row] = await tx.execute<{ pid: number }>(sql`select pg_backend_pid() as pid`);
        bPid = row?.pid;
        await write(tx as unknown as Executor, { visitId: ids.v6b, localDate: day6 }, grams('45'));
      });
      let waiting = false;
      for (let tries = 0; tries < 200 && !waiting; tries++) {
        await new Promise((resolve) => setTimeout(resolve, 50));
        if (bPid === undefined) continue;
        const [row] = await db().execute<{ waiting: boolean }>(
          sql`select exists (select from pg_locks where locktype = 'advisory' and not granted and pid = ${bPid}) as waiting`,
        );
        waiting = row?.waiting === true;
      }
      expect(waiting, 'B waits on the advisory lock A holds').toBe(true);
      commitA();
      await aDone;
      await bDone;
    } finally {
      commitA();
      await Promise.all([clientA.end({ timeout: 5 }), clientB.end({ timeout: 5 })]);
    }
    // Day 6: 70 + 45 = 115 g on both rows; each visit its own: v6a 70 g, v6b 45 g.
    expect(await totals(eq(harvestTotals.countedOn, day6))).toEqual([
      { day: day6, visit: 'v6a', permit: 'permit', club: null, total: '70', dayTotal: '115', permitDayTotal: '115', visitTotal: '70', entries: 1, breaches: 0 },
      { day: day6, visit: 'v6b', permit: 'permit', club: null, total: '45', dayTotal: '115', permitDayTotal: '115', visitTotal: '45', entries: 1, breaches: 0 },
    ]);
  });

  it('given entries on two parcels and none on a third, harvested_parcels holds each of the two once and not the third', async () => {
    await entry({ foragerId: ids.bo, parcelId: ids.otherParcel, permitId: null, localDate: day1 }, grams('5'));
    await entry({ foragerId: ids.bo, parcelId: ids.otherParcel, permitId: null, localDate: day2 }, grams('7'));
    const rows = await db().select({ parcelId: harvestedParcels.parcelId }).from(harvestedParcels);
    const held = rows.map((r) => r.parcelId);
    // Totals Hollow (many entries) and Other Lot (two entries), once each; Empty Lot not at all.
    expect(held.sort()).toEqual([ids.parcel, ids.otherParcel].sort());
    expect(held).not.toContain(ids.emptyParcel);
  });

  it('given the whole ledger so far, it holds the same rows as the migration’s one-pass rebuild of it', async () => {
    const migration = readFileSync(join(migrationsFolder, '0011_ledger_totals_from_facts.sql'), 'utf8');
    const withoutComments = (statement: string) => statement.split('\n').filter((line) => !line.trimStart().startsWith('--')).join('\n').trim();
    const statements = migration.split('--> statement-breakpoint').map(withoutComments).filter((s) => s.startsWith('INSERT INTO harvest_totals ') && s.endsWith('FROM cells;'));
    expect(statements).toHaveLength(1);
    const rebuild = statements[0]!.replace(/^INSERT INTO harvest_totals /, 'INSERT INTO rebuilt_totals ');
    const columns = sql.raw(`parcel_id::text, species_id::text, measure::text, season_start::text, season_end::text, forager_id, counted_on::text,
      visit_id::text, permit_id::text, club_id::text, trim_scale(total)::text as total, trim_scale(day_total)::text as day_total,
      trim_scale(permit_day_total)::text as permit_day_total, trim_scale(visit_total)::text as visit_total, entries, breaches`);
    const order = sql.raw('order by parcel_id, species_id, measure, season_start, season_end, forager_id, counted_on, visit_id, permit_id, club_id');
    const { kept, rebuilt } = await db().transaction(async (tx) => {
      await tx.execute(sql`create temporary table rebuilt_totals (like harvest_totals) on commit drop`);
      await tx.execute(sql.raw(rebuild));
      return {
        kept: await tx.execute(sql`select ${columns} from harvest_totals ${order}`),
        rebuilt: await tx.execute(sql`select ${columns} from rebuilt_totals ${order}`),
      };
    });
    // Rows, counted by hand: chaga mass (day1, v1), (day1, v2), (day2, v3), (day2, v4), (day3, two seasons),
    // (day5, none), (day6, v6a), (day6, v6b) = 9; leek mass (day1, v1) = 1; leek plants (day1, v1), (day1, v2) = 2;
    // Bo's on Other Lot (day1), (day2) = 2. 14 in all.
    expect(kept).toHaveLength(14);
    expect([...kept]).toEqual([...rebuilt]);
  });
});
