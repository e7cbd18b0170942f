import { DOMParser } from '@xmldom/xmldom';
import { sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { validateBoundaryForSave } from '../../src/db/boundaries.queries';
import { applyMigrations } from '../../src/db/migrations';
import { clubMemberships, clubs, noHarvestZones, parcels, permits } from '../../src/db/schema';
import { exportFormats } from '../../src/lib/boundary-exports';
import { parseBoundaryFile } from '../../src/lib/boundaries/parse';
import type { BoundaryGeometry } from '../../src/lib/boundaries/types';
import { exportParcelForOwner, exportUsableParcels } from '../../src/server/boundary-exports';
import { createThrowawayDatabase, insertUser, migrationsFolder, one, type ThrowawayDatabase } from './throwaway-database';

/*
 * Downloads of boundaries from the real database, and what the boundary importer makes of them. The
 * expected polygons are what PostGIS holds, read back by PostGIS itself (ST_AsGeoJSON at 15 decimals,
 * wound by ST_ForcePolygonCCW as RFC 7946 §3.1.6 asks), never what our code wrote.
 *
 * Ada owns Ada's Wood (one part, with a hole, drawn clockwise, and a no-harvest zone) and Ada's Two
 * Lots (two parts). Ben owns Ben's Open Lot. Fay holds a personal active permit on Ada's Wood, her
 * club an active one on Ada's Two Lots; her request on Ben's Open Lot and a revoked permit on Ben's
 * Other Lot give her nothing to use there. Gil holds nothing.
 */
let throwaway: ThrowawayDatabase | undefined;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};

const ids = { ada: '', ben: '', fay: '', gil: '', club: '', wood: '', twoLots: '', benOpen: '', benOther: '' };

/** Many decimals, so a file that rounds shows it. */
const square = (west: number, south: number, side: number) => [[west, south], [west, south + side], [west + side, south + side], [west + side, south], [west, south]];
const woodBoundary: BoundaryGeometry = {
  type: 'MultiPolygon',
  coordinates: [[square(-73.412345678901, 44.123456789012, 0.01), [[-73.408, 44.127], [-73.405, 44.127], [-73.405, 44.13], [-73.408, 44.127]]]],
};
const twoLotsBoundary: BoundaryGeometry = { type: 'MultiPolygon', coordinates: [[square(-73.3, 44.1, 0.004)], [square(-73.29, 44.1, 0.004)]] };
const zoneBoundary: BoundaryGeometry = { type: 'MultiPolygon', coordinates: [[[[-73.411, 44.125], [-73.41, 44.125], [-73.41, 44.126], [-73.411, 44.125]]]] };

async function addParcel(ownerId: string, name: string, boundary: BoundaryGeometry, openToRequests = false) {
  return (await one(db().insert(parcels).values({ ownerId, name, status: 'listed', openToRequests, boundary, areaM2: 1, timeZone: 'America/New_York' }).returning({ id: parcels.id }))).id;
}

/** The stored boundary as PostGIS writes it in RFC 7946's winding: the expected value of every round trip. */
async function storedPolygons(parcelId: string): Promise<number[][][][]> {
  const [row] = await db().execute<{ g: { coordinates: number[][][][] } }>(sql`select ST_AsGeoJSON(ST_ForcePolygonCCW(boundary), 15)::json as g from parcels where id = ${parcelId}::uuid`);
  if (!row) throw new Error('no such parcel');
  return row.g.coordinates;
}

const partsOf = (geometry: BoundaryGeometry): number[][][][] => (geometry.type === 'Polygon' ? [geometry.coordinates] : geometry.coordinates);

function expectSameRings(actual: number[][][], expected: number[][][]) {
  expect(actual.map((r) => r.length)).toEqual(expected.map((r) => r.length));
  actual.forEach((ring, r) =>
    ring.forEach((position, i) => {
      const want = expected[r]?.[i] ?? [];
      expect(Math.abs((position[0] as number) - (want[0] as number)), `ring ${r} vertex ${i} longitude`).toBeLessThanOrEqual(1e-9);
      expect(Math.abs((position[1] as number) - (want[1] as number)), `ring ${r} vertex ${i} latitude`).toBeLessThanOrEqual(1e-9);
    }),
  );
}

const forager = (id: string, clubIds: string[] = []) => ({ id, clubIds });
const now = new Date('2026-12-02T16:00:00Z');

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_exports');
  await applyMigrations(throwaway.db, migrationsFolder);
  ids.ada = await insertUser(db(), 'ada@exports.test', 'Ada Acre', ['landowner']);
  ids.ben = await insertUser(db(), 'ben@exports.test', 'Ben Birch', ['landowner']);
  ids.fay = await insertUser(db(), 'fay@exports.test', 'Fay Forager');
  ids.gil = await insertUser(db(), 'gil@exports.test', 'Gil Greene');
  ids.club = (await one(db().insert(clubs).values({ slug: 'exports-club', name: 'Exports Club' }).returning({ id: clubs.id }))).id;
  await db().insert(clubMemberships).values({ clubId: ids.club, userId: ids.fay, role: 'member', state: 'active' });
  ids.wood = await addParcel(ids.ada, "Ada's Wood", woodBoundary);
  ids.twoLots = await addParcel(ids.ada, "Ada's Two Lots", twoLotsBoundary);
  ids.benOpen = await addParcel(ids.ben, "Ben's Open Lot", { type: 'MultiPolygon', coordinates: [[square(-73.2, 44.1, 0.004)]] }, true);
  ids.benOther = await addParcel(ids.ben, "Ben's Other Lot", { type: 'MultiPolygon', coordinates: [[square(-73.19, 44.1, 0.004)]] });
  await db().insert(noHarvestZones).values({ parcelId: ids.wood, name: 'Heron pool', reason: 'Nesting herons', boundary: zoneBoundary });
  const term = { state: 'active' as const, startsOn: '2026-01-01', endsOn: '2027-12-31' };
  await db().insert(permits).values([
    { parcelId: ids.wood, holderUserId: ids.fay, ...term },
    { parcelId: ids.twoLots, holderClubId: ids.club, ...term },
    { parcelId: ids.benOpen, holderUserId: ids.fay, ...term, state: 'requested' },
    { parcelId: ids.benOther, holderUserId: ids.fay, ...term, state: 'revoked' },
  ]);
});

afterAll(async () => {
  await throwaway?.drop();
});

describe("a landowner's parcel download", () => {
  it.each(exportFormats)("given Ada's Wood as %s, the boundary importer reads back the stored polygon, hole included, within 1e-9°", async (format) => {
    const file = await exportParcelForOwner(db(), { parcelId: ids.wood, ownerId: ids.ada, format });
    if (!file) throw new Error('no file');
    expect(file.fileName).toBe(`ada-s-wood.${format}`);
    const read = parseBoundaryFile(file.body, file.fileName);
    if (!read.ok) throw new Error(JSON.stringify(read.problems));
    const [stored] = await storedPolygons(ids.wood);
    if (!stored) throw new Error('no part');
    const land = read.features.filter((f) => f.name === "Ada's Wood");
    expect(land).toHaveLength(1);
    if (format === 'gpx') {
      // GPX has no areas: the outer ring and the hole come back as two closed tracks, each a boundary.
      expectSameRings(partsOf(land[0]!.geometry)[0]!, [stored[0]!]);
      const hole = read.features.find((f) => f.name === "Ada's Wood: cut-out 1");
      expectSameRings(partsOf(hole!.geometry)[0]!, [stored[1]!]);
    } else {
      expectSameRings(partsOf(land[0]!.geometry)[0]!, stored);
      // What the importer endpoint does next: the same polygon passes the save check.
      const checked = await validateBoundaryForSave(db(), land[0]!.geometry, { ownerId: ids.ada, excludeParcelId: ids.wood });
      expect(checked.ok).toBe(true);
    }
    expect(read.features.map((f) => f.name)).toContain('No-harvest zone: Heron pool');
  });

  it.each(['geojson', 'kml'] as const)("given Ada's Two Lots as %s, both parts come back in order", async (format) => {
    const file = await exportParcelForOwner(db(), { parcelId: ids.twoLots, ownerId: ids.ada, format });
    const read = parseBoundaryFile(file!.body, file!.fileName);
    if (!read.ok) throw new Error(JSON.stringify(read.problems));
    // KML writes the parts as a MultiGeometry, which the importer reads as one area per part.
    const parts = read.features.filter((f) => f.name === "Ada's Two Lots").flatMap((f) => partsOf(f.geometry));
    const stored = await storedPolygons(ids.twoLots);
    expect(parts).toHaveLength(2);
    parts.forEach((part, i) => expectSameRings(part, stored[i]!));
  });

  it("given the KML and GPX of Ada's Wood, the zone's reason is in the file", async () => {
    const kml = await exportParcelForOwner(db(), { parcelId: ids.wood, ownerId: ids.ada, format: 'kml' });
    const placemarks = Array.from(new DOMParser().parseFromString(kml!.body, 'text/xml').getElementsByTagName('Placemark'));
    expect(placemarks.map((p) => p.getElementsByTagName('name')[0]?.textContent)).toEqual(["Ada's Wood", 'No-harvest zone: Heron pool']);
    expect(placemarks[1]?.getElementsByTagName('description')[0]?.textContent).toContain('Nesting herons');
    const gpx = await exportParcelForOwner(db(), { parcelId: ids.wood, ownerId: ids.ada, format: 'gpx' });
    const tracks = Array.from(new DOMParser().parseFromString(gpx!.body, 'text/xml').getElementsByTagName('trk'));
    expect(tracks).toHaveLength(3);
    expect(tracks[2]?.getElementsByTagName('desc')[0]?.textContent).toContain('Nesting herons');
  });

  it("given another landowner asking for Ada's Wood, there is no file", async () => {
    expect(await exportParcelForOwner(db(), { parcelId: ids.wood, ownerId: ids.ben, format: 'geojson' })).toBeNull();
  });
});

describe("a forager's download of the parcels they may use", () => {
  it('given Fay, it holds the parcel of her own permit and her club’s, with the zone, and nothing she only asked for or lost', async () => {
    const file = await exportUsableParcels(db(), { forager: forager(ids.fay, [ids.club]), format: 'geojson', now });
    const json = JSON.parse(file.body);
    expect(json.features.map((f: { properties: { name: string } }) => f.properties.name)).toEqual(["Ada's Two Lots", "Ada's Wood", 'No-harvest zone: Heron pool']);
    // 2026-12-02T16:00Z is 11:00 on 2 December in New York (EST, UTC−5; IANA tz data, REFERENCES §6).
    expect(file.fileName).toBe('tallywood-parcels-2026-12-02.geojson');
    const read = parseBoundaryFile(file.body, file.fileName);
    if (!read.ok) throw new Error(JSON.stringify(read.problems));
    expectSameRings(partsOf(read.features.find((f) => f.name === "Ada's Wood")!.geometry)[0]!, (await storedPolygons(ids.wood))[0]!);
  });

  it('given Fay outside her club, the club’s parcel is not in it', async () => {
    const file = await exportUsableParcels(db(), { forager: forager(ids.fay), format: 'kml', now });
    const names = Array.from(new DOMParser().parseFromString(file.body, 'text/xml').getElementsByTagName('Placemark')).map((p) => p.getElementsByTagName('name')[0]?.textContent);
    expect(names).toEqual(["Ada's Wood", 'No-harvest zone: Heron pool']);
  });

  it('given Gil, who holds nothing, the files are valid and empty', async () => {
    const geojson = await exportUsableParcels(db(), { forager: forager(ids.gil), format: 'geojson', now });
    expect(JSON.parse(geojson.body)).toEqual({ type: 'FeatureCollection', features: [] });
    expect(geojson.fileName).toBe('tallywood-parcels.geojson');
    const gpx = await exportUsableParcels(db(), { forager: forager(ids.gil), format: 'gpx', now });
    const doc = new DOMParser().parseFromString(gpx.body, 'text/xml');
    expect(doc.documentElement?.tagName).toBe('gpx');
    expect(doc.getElementsByTagName('trk')).toHaveLength(0);
  });
});
