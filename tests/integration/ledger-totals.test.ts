import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { and, eq, or, sql, type SQL } from 'drizzle-orm';
import { drizzle } from 'drizzle-orm/postgres-js';
import postgres from 'postgres';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { applyMigrations } from '../../src/db/migrations';
import { harvestedParcels, harvestEntries, harvestTotals, parcels, permits, species, visits, type NewHarvestEntry } from '../../src/db/schema';
import { createThrowawayDatabase, insertUser, migrationsFolder, one, referenceBoundary, type ThrowawayDatabase } from './throwaway-database';

/*
 * harvest_totals, kept by the AFTER INSERT trigger of drizzle/0009_ledger_totals_kept.sql, against
 * the real migrations. The ledger is append-only by trigger, so every row lives in a throwaway
 * database. All mass is written in grams (base unit g, so base_quantity = quantity), all counts in
 * fruiting bodies (base unit count). Every expected figure below is worked by hand beside its test.
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

const ids = {
  owner: '', ada: '', bo: '',
  parcel: '', otherParcel: '', emptyParcel: '', chaga: '', permit: '',
  v1: '', v2: '', v3: '', v4: '', v6a: '', v6b: '',
  e100: '',
};
const boundary = referenceBoundary;

async function parcel(name: string) {
  // 876 163.448 m²: the area of this ring, as in audit.test.ts.
  return (await one(db().insert(parcels).values({ ownerId: ids.owner, name, status: 'listed', boundary, areaM2: 876_163.448, timeZone: 'America/New_York' }).returning({ id: parcels.id }))).id;
}

async function visit(localDate: string, values: Partial<typeof visits.$inferInsert> = {}) {
  return (await one(db().insert(visits).values({ foragerId: ids.ada, parcelId: ids.parcel, permitId: ids.permit, localDate, ...values }).returning({ id: visits.id }))).id;
}

type EntryValues = Omit<NewHarvestEntry, 'idempotencyKey' | 'recordedBy'>;

/** An entry of Ada's chaga on the parcel under her permit, in grams, unless the values say otherwise. */
const entryRow = (values: Partial<EntryValues> & Pick<EntryValues, 'localDate' | 'quantity'>): NewHarvestEntry => {
  const full = {
    foragerId: ids.ada, parcelId: ids.parcel, permitId: ids.permit, speciesId: ids.chaga, method: 'cut' as const,
    unit: 'g' as const, dimension: 'mass' as const, baseQuantity: values.quantity, ...values,
  };
  return { ...full, recordedBy: full.foragerId, idempotencyKey: crypto.randomUUID() };
};

async function entry(values: Partial<EntryValues> & Pick<EntryValues, 'localDate' | 'quantity'>) {
  return (await one(db().insert(harvestEntries).values(entryRow(values)).returning({ id: harvestEntries.id }))).id;
}

/** The names of the visits, so that rows read as (day, visit) and sort the same on every run. */
const visitName = (id: string | null) => (id === null ? null : (Object.entries(ids).find(([, value]) => value === id)?.[0] ?? id));

type TotalsRow = { day: string; visit: string | null; permit: string | null; total: string; dayTotal: string; visitTotal: string | null; entries: number; breaches: number };

/** Ada's chaga rows on the parcel that match `where`, numerics without trailing zeros, sorted by day and visit name. */
async function totals(where: SQL | undefined, dimension: 'mass' | 'count' = 'mass'): Promise<TotalsRow[]> {
  const rows = await db()
    .select({
      day: harvestTotals.localDate,
      visitId: harvestTotals.visitId,
      permitId: harvestTotals.permitId,
      total: sql<string>`trim_scale(${harvestTotals.total})::text`,
      dayTotal: sql<string>`trim_scale(${harvestTotals.dayTotal})::text`,
      visitTotal: sql<string | null>`trim_scale(${harvestTotals.visitTotal})::text`,
      entries: harvestTotals.entries,
      breaches: harvestTotals.breaches,
    })
    .from(harvestTotals)
    .where(and(eq(harvestTotals.foragerId, ids.ada), eq(harvestTotals.parcelId, ids.parcel), eq(harvestTotals.speciesId, ids.chaga), eq(harvestTotals.dimension, dimension), where));
  return rows
    .map(({ visitId, permitId, ...row }) => ({ ...row, visit: visitName(visitId), permit: permitId === ids.permit ? 'permit' : permitId }))
    .sort((a, b) => `${a.day} ${a.visit ?? ''}`.localeCompare(`${b.day} ${b.visit ?? ''}`));
}

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_totals');
  await applyMigrations(throwaway.db, migrationsFolder);
  ids.owner = await insertUser(db(), 'owner@totals.test', 'Olive Owner', ['forager', 'landowner']);
  ids.ada = await insertUser(db(), 'ada@totals.test', 'Ada Forager');
  ids.bo = await insertUser(db(), 'bo@totals.test', 'Bo Forager');
  ids.parcel = await parcel('Totals Hollow');
  ids.otherParcel = await parcel('Other Lot');
  ids.emptyParcel = await parcel('Empty Lot');
  ids.chaga = (await one(db().insert(species).values({ slug: 'chaga-totals', scientificName: 'Inonotus obliquus', commonName: 'Chaga', kind: 'mushroom', usualUnit: 'g' }).returning({ id: species.id }))).id;
  ids.permit = (await one(db().insert(permits).values({ parcelId: ids.parcel, holderUserId: ids.ada, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31' }).returning({ id: permits.id }))).id;
  ids.v1 = await visit(day1);
  ids.v2 = await visit(day1);
  // v3 begins on day2 and runs past local midnight into day3.
  ids.v3 = await visit(day2);
  ids.v4 = await visit(day4);
  ids.v6a = await visit(day6);
  ids.v6b = await visit(day6);
});

afterAll(async () => {
  await throwaway?.drop();
});

describe('harvest_totals kept by the trigger on harvest_entries', () => {
  it('given two visits on one day, it keeps a row per visit with the whole day on each and each visit its own', async () => {
    ids.e100 = await entry({ visitId: ids.v1, localDate: day1, quantity: '100' });
    await entry({ visitId: ids.v1, localDate: day1, quantity: '50' });
    await entry({ visitId: ids.v2, localDate: day1, quantity: '30' });
    // (day1, v1): 100 + 50 = 150 g, 2 entries; (day1, v2): 30 g, 1 entry.
    // Day 1 on both rows: 150 + 30 = 180 g. Visit v1: 150 g (only day1); v2: 30 g.
    expect(await totals(eq(harvestTotals.localDate, day1))).toEqual([
      { day: day1, visit: 'v1', permit: 'permit', total: '150', dayTotal: '180', visitTotal: '150', entries: 2, breaches: 0 },
      { day: day1, visit: 'v2', permit: 'permit', total: '30', dayTotal: '180', visitTotal: '30', entries: 1, breaches: 0 },
    ]);
  });

  it('given one visit across local midnight, it keeps a row per day with each day its own and the whole visit on both', async () => {
    await entry({ visitId: ids.v3, localDate: day2, quantity: '40' });
    await entry({ visitId: ids.v3, localDate: day3, quantity: '25' });
    // Day 2: 40 g; day 3: 25 g. Visit v3 on both rows: 40 + 25 = 65 g.
    expect(await totals(eq(harvestTotals.visitId, ids.v3))).toEqual([
      { day: day2, visit: 'v3', permit: 'permit', total: '40', dayTotal: '40', visitTotal: '65', entries: 1, breaches: 0 },
      { day: day3, visit: 'v3', permit: 'permit', total: '25', dayTotal: '25', visitTotal: '65', entries: 1, breaches: 0 },
    ]);
  });

  it('given a correction recorded on a later day in another visit, it counts it on its entry’s day and visit', async () => {
    await entry({ visitId: ids.v4, localDate: day4, quantity: '-20', correctsEntryId: ids.e100, correctionReason: 'Weighed again without the bark' });
    // Counted on (day1, v1): 150 − 20 = 130 g; still 2 entries (a taking-away correction is not one).
    // Day 1 on both rows: 130 + 30 = 160 g. Visit v1: 130 g; v2 unchanged, 30 g.
    expect(await totals(eq(harvestTotals.localDate, day1))).toEqual([
      { day: day1, visit: 'v1', permit: 'permit', total: '130', dayTotal: '160', visitTotal: '130', entries: 2, breaches: 0 },
      { day: day1, visit: 'v2', permit: 'permit', total: '30', dayTotal: '160', visitTotal: '30', entries: 1, breaches: 0 },
    ]);
    // Nothing on the day or the visit it was recorded in.
    expect(await totals(or(eq(harvestTotals.localDate, day4), eq(harvestTotals.visitId, ids.v4)))).toEqual([]);
  });

  it('given two entries with neither permit nor visit on one day, it keeps them on one row with no visit total', async () => {
    await entry({ permitId: null, visitId: null, localDate: day5, quantity: '10' });
    await entry({ permitId: null, visitId: null, localDate: day5, quantity: '15' });
    // NULLS NOT DISTINCT: one row, 10 + 15 = 25 g, 2 entries; the day is that row alone, 25 g; no visit, no visit total.
    expect(await totals(eq(harvestTotals.localDate, day5))).toEqual([
      { day: day5, visit: null, permit: null, total: '25', dayTotal: '25', visitTotal: null, entries: 2, breaches: 0 },
    ]);
  });

  it('given a breach and entries in another dimension on a day and visit with mass, it counts the breach on a row of their own and leaves the mass rows as they were', async () => {
    await entry({ visitId: ids.v1, localDate: day1, quantity: '3', unit: 'fruiting-body', dimension: 'count', baseQuantity: '3', breach: true, acknowledgedOver: true });
    await entry({ visitId: ids.v1, localDate: day1, quantity: '2', unit: 'fruiting-body', dimension: 'count', baseQuantity: '2' });
    // Count on (day1, v1): 3 + 2 = 5, 2 entries, 1 breach; the day's count and the visit's count are that row alone, 5.
    expect(await totals(eq(harvestTotals.localDate, day1), 'count')).toEqual([
      { day: day1, visit: 'v1', permit: 'permit', total: '5', dayTotal: '5', visitTotal: '5', entries: 2, breaches: 1 },
    ]);
    // Mass as after the correction: (day1, v1) 130 g, (day1, v2) 30 g, day 160 g, no breach.
    expect(await totals(eq(harvestTotals.localDate, day1))).toEqual([
      { day: day1, visit: 'v1', permit: 'permit', total: '130', dayTotal: '160', visitTotal: '130', entries: 2, breaches: 0 },
      { day: day1, visit: 'v2', permit: 'permit', total: '30', dayTotal: '160', visitTotal: '30', entries: 1, breaches: 0 },
    ]);
  });

  it('given the entries so far, it holds the same rows as the migration’s one-pass backfill of the same ledger', async () => {
    const migration = readFileSync(join(migrationsFolder, '0009_ledger_totals_kept.sql'), 'utf8');
    const statements = migration.split('--> statement-breakpoint').map((s) => s.trim()).filter((s) => s.startsWith('INSERT INTO harvest_totals ') && s.endsWith('FROM cells;'));
    expect(statements).toHaveLength(1);
    const backfill = statements[0]!.replace(/^INSERT INTO harvest_totals /, 'INSERT INTO backfill_totals ');
    const columns = sql.raw(`parcel_id::text, species_id::text, dimension::text, forager_id, permit_id::text, local_date::text, visit_id::text,
      trim_scale(total)::text as total, trim_scale(day_total)::text as day_total, trim_scale(visit_total)::text as visit_total, entries, breaches`);
    const order = sql.raw('order by parcel_id, species_id, dimension, forager_id, permit_id, local_date, visit_id');
    const { kept, summed } = await db().transaction(async (tx) => {
      await tx.execute(sql`create temporary table backfill_totals (like harvest_totals) on commit drop`);
      await tx.execute(sql.raw(backfill));
      return {
        kept: await tx.execute(sql`select ${columns} from harvest_totals ${order}`),
        summed: await tx.execute(sql`select ${columns} from backfill_totals ${order}`),
      };
    });
    // Rows so far: mass (day1, v1), (day1, v2), (day2, v3), (day3, v3), (day5, none); count (day1, v1): 6.
    expect(kept).toHaveLength(6);
    expect([...kept]).toEqual([...summed]);
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
        await tx.insert(harvestEntries).values(entryRow({ visitId: ids.v6a, localDate: day6, quantity: '70' }));
        aInserted();
        await aMayCommit;
      });
      await Promise.race([aHasInserted, aDone]);
      const bDone = drizzle(clientB).transaction(async (tx) => {
        const [row] = await tx.execute<{ pid: number }>(sql`select pg_backend_pid() as pid`);
        bPid = row?.pid;
        await tx.insert(harvestEntries).values(entryRow({ visitId: ids.v6b, localDate: day6, quantity: '45' }));
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
    expect(await totals(eq(harvestTotals.localDate, day6))).toEqual([
      { day: day6, visit: 'v6a', permit: 'permit', total: '70', dayTotal: '115', visitTotal: '70', entries: 1, breaches: 0 },
      { day: day6, visit: 'v6b', permit: 'permit', total: '45', dayTotal: '115', visitTotal: '45', entries: 1, breaches: 0 },
    ]);
  });

  it('given entries on two parcels and none on a third, harvested_parcels holds each of the two once and not the third', async () => {
    await entry({ foragerId: ids.bo, parcelId: ids.otherParcel, permitId: null, localDate: day1, quantity: '5' });
    await entry({ foragerId: ids.bo, parcelId: ids.otherParcel, permitId: null, localDate: day2, quantity: '7' });
    const rows = await db().select({ parcelId: harvestedParcels.parcelId }).from(harvestedParcels);
    const held = rows.map((r) => r.parcelId);
    // Totals Hollow (many entries) and Other Lot (two entries), once each; Empty Lot not at all.
    expect(held.sort()).toEqual([ids.parcel, ids.otherParcel].sort());
    expect(held).not.toContain(ids.emptyParcel);
  });
});
