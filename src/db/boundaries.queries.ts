import { sql, type SQL } from 'drizzle-orm';
import postgres from 'postgres';
import { readBoundaryGeometry } from '../lib/boundaries/coordinates';
import { formatPosition } from '../lib/boundaries/geodesy';
import { problemFromPostgis } from '../lib/boundaries/postgis-reasons';
import { normalizeWinding } from '../lib/boundaries/shape';
import type { BoundaryLimits, BoundaryProblem, MultiPolygonGeometry } from '../lib/boundaries/types';
import { checkBoundary, defaultBoundaryLimits } from '../lib/boundaries/validate';
import { formatArea } from '../lib/format';
import { isUuid } from '../lib/ids';
import type { Executor } from './client';
import { parcels } from './schema';

/**
 * PostGIS is the authority on boundaries: the pure checks in src/lib/boundaries run first (cheap, and
 * the same in the browser), then these judge validity (GEOS), area on the WGS 84 spheroid and overlaps.
 */

/** The stored shape: a MultiPolygon in SRID 4326, as the parcels and no_harvest_zones columns hold it. */
const asBoundary = (geometry: unknown): SQL => sql`ST_Multi(ST_SetSRID(ST_GeomFromGeoJSON(${JSON.stringify(geometry)}), 4326))`;

/** A GeoJSON PostGIS cannot read raises an internal (XX000) or data (22xxx) error; that is the input's fault, not a 500. */
function unreadableReason(error: unknown): string | null {
  const cause = (error as { cause?: unknown }).cause ?? error;
  if (!(cause instanceof postgres.PostgresError) || !/^(XX|22)/.test(cause.code)) return null;
  return cause.message;
}

/**
 * Runs `query` in a savepoint (a transaction of its own when `db` is the pool), so a PostGIS error on
 * bad input leaves a caller's transaction usable.
 */
async function guarded<T>(db: Executor, query: (tx: Executor) => Promise<T>): Promise<{ ok: true; value: T } | { ok: false; reason: string }> {
  try {
    return { ok: true, value: await db.transaction(query) };
  } catch (error) {
    const reason = unreadableReason(error);
    if (reason === null) throw error;
    return { ok: false, reason };
  }
}

export type BoundaryInspection = { valid: boolean; reason: string | null; location: [number, number] | null; areaM2: number; vertexCount: number };

/**
 * What PostGIS makes of a GeoJSON boundary: ST_IsValid with ST_IsValidReason and the location of
 * ST_IsValidDetail, ST_Area on geography (m², WGS 84 spheroid) and ST_NPoints. `reason` is null when valid.
 */
export async function inspectBoundary(db: Executor, geometry: unknown): Promise<BoundaryInspection> {
  type Row = { type: string; empty: boolean; valid: boolean; reason: string; location: string | null; area: number; vertices: number };
  const result = await guarded(db, async (tx) => {
    const rows = await tx.execute<Row>(sql`
      select ST_GeometryType(g) as type, ST_IsEmpty(g) as empty, ST_IsValid(g) as valid, ST_IsValidReason(g) as reason,
             ST_AsGeoJSON((ST_IsValidDetail(g)).location) as location, ST_Area(g::geography) as area, ST_NPoints(g) as vertices
      from (select ${asBoundary(geometry)} as g) as input`);
    return [...rows][0];
  });
  if (!result.ok) return { valid: false, reason: `PostGIS cannot read this GeoJSON: ${result.reason}`, location: null, areaM2: 0, vertexCount: 0 };
  const row = result.value;
  if (!row) throw new Error('inspectBoundary: PostGIS returned no row');
  const base = { areaM2: Number(row.area), vertexCount: Number(row.vertices) };
  if (row.type !== 'ST_MultiPolygon') return { ...base, valid: false, reason: `Not an area: PostGIS reads it as ${row.type.replace(/^ST_/, '')}`, location: null };
  if (row.empty) return { ...base, valid: false, reason: 'Empty geometry', location: null };
  const point = row.location ? (JSON.parse(row.location) as { coordinates: [number, number] }).coordinates : null;
  return { ...base, valid: row.valid, reason: row.valid ? null : row.reason, location: row.valid ? null : point };
}

export type OverlappingParcel = { parcelId: string; name: string; overlapM2: number };
export type Overlaps = { own: OverlappingParcel[]; othersLand: boolean };

/**
 * What `geometry` shares, by more than 1 m², with other parcels: ST_Intersects through the GiST
 * index, then the geodesic area of the intersection; parcels that only share an edge or a corner do
 * not count. `own` lists the owner's own parcels (drafts too, not archived) with the area shared.
 * `othersLand` only says whether another owner's listed parcel is under it: their name, id, area and
 * boundary never leave the database, so a probing square learns at most that someone's land is there,
 * and other owners' drafts do not count (they are not registered until a verified landowner lists them).
 * `geometry` should be valid (inspectBoundary); an invalid one is repaired with ST_MakeValid for this test only.
 */
export async function findOverlaps(
  db: Executor,
  { geometry, ownerId, excludeParcelId }: { geometry: unknown; ownerId: string; excludeParcelId?: string },
): Promise<Overlaps> {
  const exclude = excludeParcelId && isUuid(excludeParcelId) ? sql`and ${parcels.id} <> ${excludeParcelId}` : sql``;
  const rows = await db.execute<{ own: OverlappingParcel[]; others_land: boolean }>(sql`
    with input as (select ${asBoundary(geometry)} as g0),
         candidate as (select case when ST_IsValid(g0) then g0 else ST_MakeValid(g0) end as g from input),
         shared as (
           select ${parcels.id} as id, ${parcels.name} as name, ${parcels.ownerId} = ${ownerId} as own,
                  ST_Area(ST_CollectionExtract(ST_Intersection(${parcels.boundary}, candidate.g), 3)::geography) as overlap
           from ${parcels}, candidate
           where ST_Intersects(${parcels.boundary}, candidate.g) and ${parcels.status} <> 'archived'
             and (${parcels.ownerId} = ${ownerId} or ${parcels.status} = 'listed') ${exclude})
    select coalesce(json_agg(json_build_object('parcelId', id, 'name', name, 'overlapM2', overlap) order by overlap desc, name) filter (where own), '[]') as own,
           coalesce(bool_or(not own), false) as others_land
    from shared
    where overlap > 1`);
  const [row] = [...rows];
  return {
    own: (row?.own ?? []).map((parcel) => ({ parcelId: parcel.parcelId, name: parcel.name, overlapM2: Number(parcel.overlapM2) })),
    othersLand: row?.others_land === true,
  };
}

/**
 * Whether a no-harvest zone lies within its parcel, the boundary included: ST_CoveredBy (a zone may
 * run along the parcel's edge; REFERENCES §4). False when the parcel does not exist or PostGIS cannot
 * read the zone. The caller checks that the actor may edit `parcelId`.
 */
export async function zoneWithinParcel(db: Executor, { zone, parcelId }: { zone: unknown; parcelId: string }): Promise<boolean> {
  if (!isUuid(parcelId)) return false;
  const result = await guarded(db, async (tx) => {
    const rows = await tx.execute<{ covered: boolean }>(sql`
      select ST_CoveredBy(${asBoundary(zone)}, ${parcels.boundary}) as covered from ${parcels} where ${parcels.id} = ${parcelId}`);
    return [...rows][0]?.covered === true;
  });
  return result.ok && result.value;
}

/** An overlap with the owner's own parcels names them; one with anyone else's land names nothing. */
export type OverlapWarning =
  | { code: 'overlap-own'; message: string; parcels: OverlappingParcel[] }
  | { code: 'overlap'; message: string };
export type BoundaryVerdict =
  | { ok: true; areaM2: number; boundary: MultiPolygonGeometry; warnings: OverlapWarning[] }
  | { ok: false; problems: BoundaryProblem[] };

/**
 * The pure checks, then PostGIS: the verdict an endpoint gives before a parcel's boundary is saved.
 * On success `boundary` is the geometry to store (a MultiPolygon, altitude dropped, exteriors
 * counter-clockwise per RFC 7946 §3.1.6) and `areaM2` PostGIS's spheroidal area for `parcels.area_m2`.
 * Overlap is a warning, not a refusal: boundaries on the ground are disputed. Only the owner's own
 * parcels are named; another owner's listed land is only said to be there (findOverlaps).
 */
export async function validateBoundaryForSave(
  db: Executor,
  geometry: unknown,
  { ownerId, excludeParcelId, limits = defaultBoundaryLimits }: { ownerId: string; excludeParcelId?: string; limits?: BoundaryLimits },
): Promise<BoundaryVerdict> {
  const checked = await checkForSave(db, geometry, limits);
  if (!checked.ok) return checked;
  const { own, othersLand } = await findOverlaps(db, { geometry: checked.boundary, ownerId, ...(excludeParcelId ? { excludeParcelId } : {}) });
  const warnings: OverlapWarning[] = [];
  if (own.length > 0) {
    warnings.push({
      code: 'overlap-own',
      parcels: own,
      message: `This boundary overlaps ${own.length === 1 ? 'your parcel' : 'your parcels'} ${own
        .map((parcel) => `“${parcel.name}” by ${formatArea(parcel.overlapM2)}`)
        .join(', ')}. Check the edge they share; you can still save.`,
    });
  }
  if (othersLand) {
    warnings.push({
      code: 'overlap',
      message: 'This boundary overlaps land registered by someone else. Check your corners against the deed or survey; you can still save, and the overlap stays on record.',
    });
  }
  return { ok: true, areaM2: checked.areaM2, boundary: checked.boundary, warnings };
}

/** The same for a no-harvest zone: valid, within the size caps, and inside its parcel (ST_CoveredBy). */
export async function validateZoneForSave(
  db: Executor,
  zone: unknown,
  { parcelId, limits = defaultBoundaryLimits }: { parcelId: string; limits?: BoundaryLimits },
): Promise<{ ok: true; areaM2: number; boundary: MultiPolygonGeometry } | { ok: false; problems: BoundaryProblem[] }> {
  const checked = await checkForSave(db, zone, limits);
  if (!checked.ok) return checked;
  if (await zoneWithinParcel(db, { zone: checked.boundary, parcelId })) return checked;
  const rows = isUuid(parcelId)
    ? await db.execute<{ at: string | null }>(sql`
        select ST_AsGeoJSON(ST_PointOnSurface(ST_Difference(${asBoundary(checked.boundary)}, ${parcels.boundary}))) as at
        from ${parcels} where ${parcels.id} = ${parcelId}`)
    : [];
  const text = [...rows][0]?.at;
  const at = text ? (JSON.parse(text) as { coordinates: [number, number] }).coordinates : null;
  return {
    ok: false,
    problems: [{
      code: 'zone-outside-parcel',
      message: `This no-harvest zone reaches outside the parcel${at ? ` near ${formatPosition(at)}` : ''}; a zone must lie within the parcel's boundary. Move that edge inside.`,
      ...(at ? { at } : {}),
    }],
  };
}

async function checkForSave(db: Executor, geometry: unknown, limits: BoundaryLimits) {
  const pure = checkBoundary(geometry, limits);
  const read = readBoundaryGeometry(geometry);
  if (pure.problems.length > 0 || !read.ok) return { ok: false as const, problems: pure.problems };
  const boundary = normalizeWinding<MultiPolygonGeometry>({ type: 'MultiPolygon', coordinates: read.parts });
  const inspected = await inspectBoundary(db, boundary);
  if (!inspected.valid) return { ok: false as const, problems: [problemFromPostgis(inspected.reason ?? 'Invalid geometry', inspected.location)] };
  if (inspected.areaM2 > limits.maxAreaHectares * 10_000 || inspected.areaM2 <= 0) {
    return {
      ok: false as const,
      problems: [{
        code: inspected.areaM2 <= 0 ? 'empty' : 'too-large',
        message: inspected.areaM2 <= 0
          ? 'This boundary encloses no area; draw the parcel as an area with at least three corners.'
          : `This boundary encloses ${formatArea(inspected.areaM2)}; the most we accept is ${formatArea(limits.maxAreaHectares * 10_000)}. Check the file, or split the land into several parcels.`,
      }],
    };
  }
  return { ok: true as const, areaM2: inspected.areaM2, boundary };
}
