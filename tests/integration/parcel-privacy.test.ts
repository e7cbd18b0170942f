import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { validateBoundaryForSave } from '../../src/db/boundaries.queries';
import { listPermittedBoundaries } from '../../src/db/field.queries';
import { applyMigrations } from '../../src/db/migrations';
import { clubs, parcels, permits } from '../../src/db/schema';
import type { BoundaryGeometry } from '../../src/lib/boundaries/types';
import type { Forager, LonLat } from '../../src/lib/field/types';
import { checkIn } from '../../src/server/field/check-in';
import { createThrowawayDatabase, insertUser, migrationsFolder, one, type ThrowawayDatabase } from './throwaway-database';

/*
 * What a landowner's boundary check and a forager's check-in may tell about other people's parcels.
 * A check-in answers only with parcels the forager may know of: listed and open to requests (what
 * My permits shows everyone), their own listed parcels, and listed parcels on which they or one of
 * their clubs hold a permit. Drafts and archived parcels take no check-ins. An overlap with another
 * owner's listed parcel is a warning that names nothing; another owner's draft is not counted.
 *
 * Every parcel is a square of 0.004° (about 315 m east–west and 445 m north–south at 45°N), each
 * 0.04° (about 3 km) from the next, so a 5 m fix sees one parcel at a time. The remote pair, a
 * private lot and a draft 3 km apart, lies a degree further north-east, for the check-in with a 5 km fix.
 */
let throwaway: ThrowawayDatabase | undefined;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};

const size = 0.004;
const square = (west: number, south: number, side = size): BoundaryGeometry => ({
  type: 'MultiPolygon' as const,
  coordinates: [[[[west, south], [west + side, south], [west + side, south + side], [west, south + side], [west, south]]]],
});
const middle = (west: number, south: number): LonLat => [west + size / 2, south + size / 2];
/** A probing square of 0.0004° (about 30 m × 45 m) in the middle of the parcel whose south-west corner is given. */
const probe = (west: number, south: number) => square(west + size / 2 - 0.0002, south + size / 2 - 0.0002, 0.0004);

const at = {
  adasWood: [-75.0, 45.0], neighbourPrivate: [-74.96, 45.0], neighbourOpen: [-74.92, 45.0], calsDraft: [-74.88, 45.0],
  archived: [-74.84, 45.0], permitted: [-74.8, 45.0], clubLot: [-74.76, 45.0], revoked: [-74.72, 45.0],
  remotePrivate: [-74.0, 46.0], remoteDraft: [-74.0, 46.03],
} satisfies Record<string, [number, number]>;

const ids = { ada: '', ben: '', cal: '', fay: '', club: '' };
const parcelIds: Record<keyof typeof at, string> = {
  adasWood: '', neighbourPrivate: '', neighbourOpen: '', calsDraft: '', archived: '', permitted: '', clubLot: '', revoked: '', remotePrivate: '', remoteDraft: '',
};
const names: Record<keyof typeof at, string> = {
  adasWood: "Ada's Wood", neighbourPrivate: 'Ben Private Lot', neighbourOpen: 'Ben Open Lot', calsDraft: 'Cal Draft Corner', archived: 'Ben Old Lot',
  permitted: 'Ben Permit Lot', clubLot: 'Ben Club Lot', revoked: 'Ben Revoked Lot', remotePrivate: 'Ben Far Lot', remoteDraft: 'Cal Far Draft',
};

const june = new Date('2026-06-10T14:00:00Z');
const fay = (): Forager => ({ id: ids.fay, clubIds: [ids.club] });
const checkInAs = (forager: Forager, position: LonLat, accuracyM = 5) => checkIn(db(), { forager, position, accuracyM, now: june });

async function addParcel(key: keyof typeof at, ownerId: string, status: 'draft' | 'listed' | 'archived', openToRequests = false) {
  const [west, south] = at[key];
  const row = await one(db().insert(parcels).values({ ownerId, name: names[key], status, openToRequests, boundary: square(west, south), areaM2: 1, timeZone: 'America/New_York' }).returning({ id: parcels.id }));
  parcelIds[key] = row.id;
}

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_privacy');
  await applyMigrations(throwaway.db, migrationsFolder);
  ids.ada = await insertUser(db(), 'ada@privacy.test', 'Ada Acre', ['forager', 'landowner']);
  ids.ben = await insertUser(db(), 'ben@privacy.test', 'Ben Birch', ['landowner']);
  ids.cal = await insertUser(db(), 'cal@privacy.test', 'Cal Unverified', ['landowner']);
  ids.fay = await insertUser(db(), 'fay@privacy.test', 'Fay Forager');
  ids.club = (await one(db().insert(clubs).values({ slug: 'privacy-club', name: 'Privacy Club' }).returning({ id: clubs.id }))).id;
  await addParcel('adasWood', ids.ada, 'listed');
  await addParcel('neighbourPrivate', ids.ben, 'listed');
  await addParcel('neighbourOpen', ids.ben, 'listed', true);
  await addParcel('calsDraft', ids.cal, 'draft');
  await addParcel('archived', ids.ben, 'archived', true);
  await addParcel('permitted', ids.ben, 'listed');
  await addParcel('clubLot', ids.ben, 'listed');
  await addParcel('revoked', ids.ben, 'listed');
  await addParcel('remotePrivate', ids.ben, 'listed');
  await addParcel('remoteDraft', ids.cal, 'draft');
  const term = { state: 'active' as const, startsOn: '2026-01-01', endsOn: '2027-12-31' };
  await db().insert(permits).values([
    { parcelId: parcelIds.permitted, holderUserId: ids.fay, ...term },
    { parcelId: parcelIds.clubLot, holderClubId: ids.club, ...term },
    { parcelId: parcelIds.revoked, holderUserId: ids.fay, ...term, state: 'revoked' },
    // Someone's permit on a draft does not bring the draft into anyone's check-ins.
    { parcelId: parcelIds.calsDraft, holderUserId: ids.fay, ...term },
  ]);
});

afterAll(async () => {
  await throwaway?.drop();
});

/** Whether any name or id of these parcels appears anywhere in an answer. */
const mentions = (answer: unknown, keys: (keyof typeof at)[]) => {
  const text = JSON.stringify(answer);
  return keys.filter((key) => text.includes(names[key]) || text.includes(parcelIds[key]));
};

describe('check-ins answer only with parcels the forager may know of', () => {
  it("given a forager inside another owner's draft (even holding a permit there), it is outside and says nothing of the draft", async () => {
    const answer = await checkInAs(fay(), middle(...at.calsDraft));
    expect(answer).toMatchObject({ verdict: 'outside', parcel: null, distanceToEdgeM: null, hazards: [] });
    expect(mentions(answer, ['calsDraft'])).toEqual([]);
  });

  it("given the draft's own unverified owner inside it, it is outside too: drafts take no check-ins", async () => {
    const answer = await checkInAs({ id: ids.cal, clubIds: [] }, middle(...at.calsDraft));
    expect(answer).toMatchObject({ verdict: 'outside', parcel: null, distanceToEdgeM: null });
  });

  it("given a forager inside another owner's listed parcel that takes no requests and on which they hold no permit, it names nothing", async () => {
    const answer = await checkInAs(fay(), middle(...at.neighbourPrivate));
    expect(answer).toMatchObject({ verdict: 'outside', parcel: null, distanceToEdgeM: null });
    expect(mentions(answer, ['neighbourPrivate'])).toEqual([]);
  });

  it('given a 5 km fix about 2.5 km from a private listed parcel and a draft, it names neither, gives no distance and says none is near', async () => {
    const [west, south] = at.remotePrivate;
    const answer = await checkInAs(fay(), [west + 0.03, south + 0.015], 5000);
    expect(answer).toMatchObject({ verdict: 'outside', parcel: null, distanceToEdgeM: null });
    expect(mentions(answer, ['remotePrivate', 'remoteDraft'])).toEqual([]);
    expect(answer.reasons.join(' ')).not.toMatch(/\d/);
    expect(answer.reasons).toContain('None is near here.');
  });

  it('given a 5 km fix near a parcel open to requests, it may name that parcel and its distance (everyone can see it on My permits)', async () => {
    const [west, south] = at.neighbourOpen;
    const answer = await checkInAs(fay(), [west + size / 2, south - 0.02], 5000);
    expect(answer).toMatchObject({ verdict: 'edge', parcel: { id: parcelIds.neighbourOpen } });
    expect(mentions(answer, ['neighbourPrivate', 'calsDraft', 'archived'])).toEqual([]);
  });

  it('given a forager inside a parcel open to requests without a permit, it is no-permit and names the parcel', async () => {
    const answer = await checkInAs(fay(), middle(...at.neighbourOpen));
    expect(answer).toMatchObject({ verdict: 'no-permit', parcel: { id: parcelIds.neighbourOpen, name: names.neighbourOpen } });
  });

  it('given a forager inside a parcel that takes no requests but on which they hold a permit, it is clear', async () => {
    const answer = await checkInAs(fay(), middle(...at.permitted));
    expect(answer).toMatchObject({ verdict: 'clear', parcel: { id: parcelIds.permitted } });
  });

  it("given a member of a club holding a permit on a parcel that takes no requests, it is clear under the club's permit", async () => {
    const answer = await checkInAs(fay(), middle(...at.clubLot));
    expect(answer).toMatchObject({ verdict: 'clear', parcel: { id: parcelIds.clubLot } });
    expect(answer.reasons[0]).toContain("your club's permit");
  });

  it('given a forager whose permit there was revoked, it names the parcel and says so', async () => {
    const answer = await checkInAs(fay(), middle(...at.revoked));
    expect(answer).toMatchObject({ verdict: 'no-permit', parcel: { id: parcelIds.revoked } });
    expect(answer.reasons.join(' ')).toContain('revoked');
  });

  it('given a landowner inside their own parcel that takes no requests, it names it', async () => {
    const answer = await checkInAs({ id: ids.ada, clubIds: [] }, middle(...at.adasWood));
    expect(answer).toMatchObject({ verdict: 'no-permit', parcel: { id: parcelIds.adasWood } });
  });

  it('given an archived parcel open to requests, it is outside', async () => {
    const answer = await checkInAs(fay(), middle(...at.archived));
    expect(answer).toMatchObject({ verdict: 'outside', parcel: null });
    expect(mentions(answer, ['archived'])).toEqual([]);
  });
});

describe("the Field map's parcels", () => {
  it('given permits on listed parcels and on a draft, it draws only the listed ones', async () => {
    const drawn = await listPermittedBoundaries(db(), { foragerId: ids.fay, clubIds: [ids.club], limit: 500 });
    expect(drawn.map((parcel) => parcel.name)).toEqual([names.clubLot, names.permitted]);
  });
});

describe('overlap warnings name only the landowner’s own parcels', () => {
  const check = (ownerId: string, geometry: BoundaryGeometry, excludeParcelId?: string) =>
    validateBoundaryForSave(db(), geometry, { ownerId, ...(excludeParcelId ? { excludeParcelId } : {}) }).then((verdict) => {
      if (!verdict.ok) throw new Error(JSON.stringify(verdict.problems));
      return verdict;
    });

  it("given a probing square inside another owner's listed parcel, it warns of land registered by someone else with no name, id or area", async () => {
    const verdict = await check(ids.ada, probe(...at.neighbourPrivate));
    expect(verdict.warnings).toEqual([{ code: 'overlap', message: expect.stringContaining('overlaps land registered by someone else') }]);
    expect(verdict.warnings[0]?.message).not.toMatch(/\d/);
    expect(mentions(verdict.warnings, ['neighbourPrivate'])).toEqual([]);
  });

  it("given a probing square inside another owner's draft, there is no warning at all", async () => {
    const verdict = await check(ids.ada, probe(...at.calsDraft));
    expect(verdict.warnings).toEqual([]);
  });

  it("given a probing square inside another owner's archived parcel, there is no warning", async () => {
    expect((await check(ids.ada, probe(...at.archived))).warnings).toEqual([]);
  });

  it('given a square over the landowner’s own parcel, the warning names that parcel and the area shared', async () => {
    const verdict = await check(ids.ada, probe(...at.adasWood));
    expect(verdict.warnings).toEqual([{
      code: 'overlap-own',
      message: expect.stringContaining(`your parcel “${names.adasWood}” by`),
      parcels: [{ parcelId: parcelIds.adasWood, name: names.adasWood, overlapM2: expect.any(Number) }],
    }]);
    const [warning] = verdict.warnings;
    const shared = warning && 'parcels' in warning ? warning.parcels[0]?.overlapM2 : 0;
    // 0.0004° × 0.0004° at 45°N: about 31.5 m × 44.5 m.
    expect(shared).toBeGreaterThan(1_300);
    expect(shared).toBeLessThan(1_500);
  });

  it("given a square across one of the landowner's parcels and another owner's, it names only their own", async () => {
    // From Ada's Wood's east half to Ben's Private Lot's west half: Ben's own lot and Ada's land.
    const verdict = await check(ids.ben, square(at.adasWood[0] + size / 2, 45.0, 0.04));
    expect(verdict.warnings.map((w) => w.code).sort()).toEqual(['overlap', 'overlap-own']);
    expect(mentions(verdict.warnings, ['adasWood'])).toEqual([]);
    expect(mentions(verdict.warnings, ['neighbourPrivate'])).toEqual(['neighbourPrivate']);
  });

  it("given a parcel's own new boundary, the parcel being edited is not counted against itself", async () => {
    const [west, south] = at.adasWood;
    expect((await check(ids.ada, square(west, south, size * 1.1), parcelIds.adasWood)).warnings).toEqual([]);
  });
});
