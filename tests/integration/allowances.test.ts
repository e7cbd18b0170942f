import { and, eq, isNull, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadParcelFacts } from '../../src/db/field.queries';
import { applyMigrations } from '../../src/db/migrations';
import { listingFacts, listParcelRules, removeAllowance, saveAllowance } from '../../src/db/parcel-rules.queries';
import { listParcelHistory } from '../../src/db/parcel-history.queries';
import { allowances, limits, parcels, permits, species } from '../../src/db/schema';
import { AppError } from '../../src/lib/errors';
import { limitsInForce } from '../../src/lib/field/tallies';
import { checkIn } from '../../src/server/field/check-in';
import { recordHarvest } from '../../src/server/field/harvest';
import { createThrowawayDatabase, insertUser, migrationsFolder, one, referenceBoundary, type ThrowawayDatabase } from './throwaway-database';

/*
 * Changing an allowance never silently zeroes tallies, and removing one keeps its history.
 * The parcel keeps America/New_York time; in June that is EDT, UTC−4 (IANA tz data), so 10:00
 * local on 2026-06-10 is 14:00Z. The season is 05-01 … 08-31: 2026-05-01 … 2026-08-31.
 */
let throwaway: ThrowawayDatabase | undefined;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};
const ids = { owner: '', forager: '', parcel: '', speciesId: '', allowance: '', permit: '' };
const inside: [number, number] = [-74.995, 45.005];
const chanterelle = (limitsInput: { scope: 'visit' | 'day' | 'season' | 'parcel-season'; quantity: string; unit: 'g' | 'us-cup' | 'kg' }[]) => ({
  speciesId: ids.speciesId, seasons: [{ start: '05-01', end: '08-31' }], methods: ['cut' as const], limits: limitsInput,
});

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_allowances');
  await applyMigrations(throwaway.db, migrationsFolder);
  ids.owner = await insertUser(db(), 'owner@allowances.test', 'Ona Owner', ['forager', 'landowner']);
  ids.forager = await insertUser(db(), 'forager@allowances.test', 'Finn Forager');
  ids.parcel = (await one(db().insert(parcels).values({ ownerId: ids.owner, name: 'Allowance Glen', status: 'listed', boundary: referenceBoundary, areaM2: 876_163.448, timeZone: 'America/New_York' }).returning({ id: parcels.id }))).id;
  ids.speciesId = (await one(db().insert(species).values({ slug: 'allowance-chanterelle', scientificName: 'Cantharellus cibarius', commonName: 'Golden chanterelle', kind: 'mushroom', usualUnit: 'g', cautions: ['Jack-o-lanterns look alike.'] }).returning({ id: species.id }))).id;
  ids.permit = (await one(db().insert(permits).values({ parcelId: ids.parcel, holderUserId: ids.forager, state: 'active', startsOn: '2026-01-01', endsOn: '2027-12-31' }).returning({ id: permits.id }))).id;
  const saved = await saveAllowance(db(), { parcelId: ids.parcel, ownerId: ids.owner, allowance: chanterelle([{ scope: 'day', quantity: '1000', unit: 'g' }]), now: new Date('2026-04-01T14:00:00Z') });
  ids.allowance = saved?.id ?? '';
  // The landowner tightens Finn's day limit to 400 g on his permit.
  await db().insert(limits).values({ allowanceId: ids.allowance, permitId: ids.permit, scope: 'day', quantity: '400', unit: 'g' });
});

afterAll(async () => {
  await throwaway?.drop();
});

describe('changing what a species is measured in', () => {
  it('given grams recorded this season, limits in US cups are refused with the reason, and the gram limit stays', async () => {
    const visit = await checkIn(db(), { forager: { id: ids.forager, clubIds: [] }, position: inside, accuracyM: 5, now: new Date('2026-06-10T14:00:00Z') });
    expect(visit.verdict).toBe('clear');
    await recordHarvest(db(), { forager: { id: ids.forager, clubIds: [] }, now: new Date('2026-06-10T14:05:00Z'), input: { idempotencyKey: crypto.randomUUID(), visitId: visit.visitId as string, speciesId: ids.speciesId, method: 'cut', quantities: [{ quantity: '150', unit: 'g' }], acknowledgeOver: false } });

    const refused = await saveAllowance(db(), { parcelId: ids.parcel, ownerId: ids.owner, allowance: chanterelle([{ scope: 'day', quantity: '4', unit: 'us-cup' }]), now: new Date('2026-06-11T14:00:00Z') }).catch((e: unknown) => e);
    expect(refused).toBeInstanceOf(AppError);
    expect(refused).toMatchObject({ status: 409, code: 'measure-in-use', field: 'limits' });
    // The season 2026-05-01 … 2026-08-31 holds the entry; the message names its end as a person reads it.
    expect((refused as AppError).message).toContain('Aug 31, 2026');
    const kept = await db().select({ quantity: limits.quantity, unit: limits.unit }).from(limits).where(and(eq(limits.allowanceId, ids.allowance), isNull(limits.permitId)));
    expect(kept).toEqual([{ quantity: '1000.000000', unit: 'g' }]);
  });

  it('given the same change of amount in another unit of mass (1 kg for 1000 g), it is accepted at once', async () => {
    const saved = await saveAllowance(db(), { parcelId: ids.parcel, ownerId: ids.owner, allowance: chanterelle([{ scope: 'day', quantity: '1', unit: 'kg' }]), now: new Date('2026-06-11T14:00:00Z') });
    expect(saved?.id).toBe(ids.allowance);
  });

  it('given the season over (2026-09-01 on the parcel), the change to US cups is accepted', async () => {
    const saved = await saveAllowance(db(), { parcelId: ids.parcel, ownerId: ids.owner, allowance: chanterelle([{ scope: 'day', quantity: '4', unit: 'us-cup' }]), now: new Date('2026-09-01T14:00:00Z') });
    expect(saved?.id).toBe(ids.allowance);
    // Back to grams for the next tests (no entry counts in an unfinished season any more).
    await saveAllowance(db(), { parcelId: ids.parcel, ownerId: ids.owner, allowance: chanterelle([{ scope: 'day', quantity: '1000', unit: 'g' }]), now: new Date('2026-09-01T15:00:00Z') });
  });
});

describe('removing an allowance', () => {
  it("given a removal, the species leaves the parcel's rules and the field's facts, but its row and the permit's tighter limit stay (before, both were deleted)", async () => {
    expect(await removeAllowance(db(), { parcelId: ids.parcel, ownerId: ids.owner, allowanceId: ids.allowance, now: new Date('2026-09-02T14:00:00Z') })).toBe(true);
    const rules = await listParcelRules(db(), { parcelId: ids.parcel, ownerId: ids.owner });
    expect(rules.allowances).toEqual([]);
    const facts = await loadParcelFacts(db(), { parcelId: ids.parcel, forager: { id: ids.forager, clubIds: [] } });
    expect(facts?.allowances).toEqual([]);
    const [row] = await db().select({ removedAt: allowances.removedAt, removedBy: allowances.removedBy }).from(allowances).where(eq(allowances.id, ids.allowance));
    expect(row).toEqual({ removedAt: new Date('2026-09-02T14:00:00Z'), removedBy: ids.owner });
    const permitLimits = await db().execute<{ quantity: string; unit: string }>(sql`select quantity::text, unit from limits where permit_id = ${ids.permit}::uuid`);
    expect([...permitLimits]).toEqual([{ quantity: '400.000000', unit: 'g' }]);
  });

  it('given a second removal, it answers that nothing was removed', async () => {
    expect(await removeAllowance(db(), { parcelId: ids.parcel, ownerId: ids.owner, allowanceId: ids.allowance, now: new Date('2026-09-03T14:00:00Z') })).toBe(false);
  });

  it("given the species allowed again, its row comes back and the permit's 400 g still tightens the parcel's 1000 g day limit", async () => {
    const saved = await saveAllowance(db(), { parcelId: ids.parcel, ownerId: ids.owner, allowance: chanterelle([{ scope: 'day', quantity: '1000', unit: 'g' }]), now: new Date('2027-04-01T14:00:00Z') });
    expect(saved?.id).toBe(ids.allowance);
    const facts = await loadParcelFacts(db(), { parcelId: ids.parcel, forager: { id: ids.forager, clubIds: [] } });
    const allowance = facts?.allowances[0];
    const permit = facts?.permits.find((p) => p.id === ids.permit) ?? null;
    if (!allowance) throw new Error('the allowance did not come back');
    expect(limitsInForce(allowance, { forager: { id: ids.forager, clubIds: [] }, permit }).map((l) => [l.scope, l.quantity, l.unit, l.fromPermit])).toEqual([['day', '400', 'g', true]]);
  });
});

describe("the parcel's history and who may replace what", () => {
  it('given the changes above, the history names each in words, newest first, for the owner only', async () => {
    const history = await listParcelHistory(db(), { parcelId: ids.parcel, ownerId: ids.owner });
    const summaries = history.map((h) => h.summary);
    // Newest first: allowed again (2027-04-01), removed (2026-09-02), back to grams, to cups, to kg (one day limit each time), first allowed.
    expect(summaries[0]).toBe('Allowed Golden chanterelle: May 1 – Aug 31; cut above ground; 1,000 g a day.');
    expect(summaries[1]).toBe('Removed the allowance for Golden chanterelle.');
    expect(summaries).toContain('Changed the allowance for Golden chanterelle: limit 1,000 g a day → 1 kg a day.');
    expect(summaries).toContain('Changed the allowance for Golden chanterelle: limit 1 kg a day → 4 US cups a day.');
    expect(history.every((h) => h.actorName === 'Ona Owner')).toBe(true);
    expect(await listParcelHistory(db(), { parcelId: ids.parcel, ownerId: ids.forager })).toEqual([]);
  });

  it('given a species that has an allowance, adding it as new is refused with a 409 naming the allowance, and nothing changes', async () => {
    const refused = await saveAllowance(db(), { parcelId: ids.parcel, ownerId: ids.owner, allowance: chanterelle([{ scope: 'day', quantity: '5', unit: 'kg' }]), now: new Date('2027-04-02T14:00:00Z'), target: { kind: 'new' } }).catch((e: unknown) => e);
    expect(refused).toBeInstanceOf(AppError);
    expect(refused).toMatchObject({ status: 409, code: 'allowance-exists', field: 'speciesId', details: { allowanceId: ids.allowance } });
    const rules = await listParcelRules(db(), { parcelId: ids.parcel, ownerId: ids.owner });
    expect(rules.allowances[0]?.limits.map((l) => [l.quantity, l.unit])).toEqual([['1000.000000', 'g']]);
  });

  it('given an allowance changed in place with no change at all, nothing is added to the history', async () => {
    const before = (await listParcelHistory(db(), { parcelId: ids.parcel, ownerId: ids.owner })).length;
    await saveAllowance(db(), { parcelId: ids.parcel, ownerId: ids.owner, allowance: chanterelle([{ scope: 'day', quantity: '1000', unit: 'g' }]), now: new Date('2027-04-03T14:00:00Z'), target: { kind: 'existing', allowanceId: ids.allowance } });
    expect((await listParcelHistory(db(), { parcelId: ids.parcel, ownerId: ids.owner })).length).toBe(before);
  });

  it('given another owner, changing the allowance in place finds no parcel', async () => {
    const other = await saveAllowance(db(), { parcelId: ids.parcel, ownerId: ids.forager, allowance: chanterelle([]), now: new Date('2027-04-03T14:00:00Z'), target: { kind: 'existing', allowanceId: ids.allowance } });
    expect(other).toBeNull();
  });

  it('given one allowance and no terms, the listing facts say so; another owner gets none', async () => {
    expect(await listingFacts(db(), { parcelId: ids.parcel, ownerId: ids.owner })).toEqual({ allowances: 1, hasTerms: false });
    expect(await listingFacts(db(), { parcelId: ids.parcel, ownerId: ids.forager })).toBeNull();
  });
});
