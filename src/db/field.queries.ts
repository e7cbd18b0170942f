import { sql, type SQL } from 'drizzle-orm';
import type { UsageWindow } from '../lib/field/counting';
import type { Forager, MeasuredParcelFacts, ParcelFacts, ScopeUsage, Usage } from '../lib/field/types';
import type { Measure } from '../lib/units';
import { executePrepared, isPool, type Executor } from './client';
import { uuidArray } from './arrays';

type Row = Record<string, unknown>;


/**
 * The facts of parcel `p` that are the same for every forager and position, as of its
 * `facts_version` (drizzle/0022: triggers raise it with every change to them): name, zone, nearing
 * threshold, current terms, closures, hazards, and the allowances in force with their species.
 * Their limits are the parcel's own and, for a forager, the ones of their permits (personal and
 * through their clubs); with no forager, every permit's, which loadMeasuredParcelsNear keeps per
 * parcel and sorts out for each forager.
 */
function sharedColumns(forager: Forager | null) {
  const permitLimits = forager
    ? sql`left join permits lp on lp.id = l.permit_id
            where l.allowance_id = a.id and (l.permit_id is null or lp.holder_user_id = ${forager.id}::text or lp.holder_club_id = any(${uuidArray(forager.clubIds)}))`
    : sql`where l.allowance_id = a.id`;
  return sql`p.name, p.time_zone, p.nearing_threshold_percent,
      (select t.id from terms t where t.parcel_id = p.id order by t.version desc limit 1) as current_terms_id,
      coalesce((select json_agg(json_build_object('startsOn', c.starts_on::text, 'endsOn', c.ends_on::text, 'reason', c.reason))
        from closures c where c.parcel_id = p.id), '[]') as closures,
      coalesce((select json_agg(json_build_object('kind', h.kind, 'title', h.title, 'detail', h.detail) order by h.title)
        from hazards h where h.parcel_id = p.id), '[]') as hazards,
      coalesce((select json_agg(json_build_object('speciesId', s.id, 'commonName', s.common_name, 'scientificName', s.scientific_name,
          'seasons', a.seasons, 'methods', a.methods, 'cautions', s.cautions, 'lookalikes', s.lookalikes,
          'limits', coalesce((select json_agg(json_build_object('scope', l.scope, 'quantity', trim_scale(l.quantity)::text, 'unit', l.unit, 'permitId', l.permit_id)
              order by l.permit_id nulls first, l.scope, l.unit)
            from limits l ${permitLimits}), '[]'))
          order by s.common_name)
        from allowances a join species s on s.id = a.species_id where a.parcel_id = p.id and a.removed_at is null), '[]') as allowances`;
}

/** The facts of parcel `p` that depend on the forager, and on the position when `at` is given: its zones (measured there) and the forager's permits on it. */
function foragerColumns(forager: Forager, at?: At) {
  const shape = (g: SQL) => (at ? measured(g) : sql`ST_AsGeoJSON(${g})::json`);
  return sql`coalesce((select json_agg(json_build_object('id', z.id, 'name', z.name, 'reason', z.reason, ${sql.raw(at ? "'at'" : "'boundary'")}, ${shape(sql`z.boundary`)}))
        from no_harvest_zones z where z.parcel_id = p.id), '[]') as zones,
      coalesce((select json_agg(json_build_object('id', pm.id, 'holderUserId', pm.holder_user_id, 'holderClubId', pm.holder_club_id, 'state', pm.state,
          'startsOn', pm.starts_on::text, 'endsOn', pm.ends_on::text, 'feeMinor', pm.fee_minor, 'feePaid', pm.fee_paid_at is not null, 'acceptedTermsId', pm.accepted_terms_id))
        from permits pm where pm.parcel_id = p.id and (pm.holder_user_id = ${forager.id}::text or pm.holder_club_id = any(${uuidArray(forager.clubIds)}))), '[]') as permits`;
}

const here = (at: At) => sql` cross join (select ST_SetSRID(ST_MakePoint(${at.longitude}::float8, ${at.latitude}::float8), 4326) as pt) here`;

/**
 * Everything the engine needs about parcels, for one forager: zones, closures, hazards, the
 * current terms, this forager's permits (personal and through their clubs) and the allowances in
 * force with every limit that applies to them, gathered by key beside each parcel.
 */
function parcelFactsQuery(forager: Forager, where: SQL, at?: At) {
  // Measured at a position: PostGIS's facts about it in place of the boundary (MeasuredPosition in src/lib/field/types.ts).
  const shape = at ? measured(sql`p.boundary`) : sql`ST_AsGeoJSON(p.boundary)::json`;
  return sql`
    select p.id, ${shape} as ${sql.raw(at ? 'at' : 'boundary')}, ${sharedColumns(forager)}, ${foragerColumns(forager, at)}
    from parcels p${at ? here(at) : sql``}
    where ${where}`;
}

type At = { longitude: number; latitude: number };

/**
 * What PostGIS measures of the position (`here.pt`) against a boundary: covered in the plane
 * (`ST_Covers`, as the engine's boundaryContains decides) and the geodesic metres to the nearest
 * edge on the WGS 84 spheroid (geography `ST_Distance` to `ST_Boundary`, as distanceToEdgeM measures).
 */
function measured(g: SQL) {
  return sql`json_build_object('covered', ST_Covers(${g}, here.pt),
      'distanceToEdgeM', ST_Distance(ST_Boundary(${g})::geography, here.pt::geography))`;
}

/** Listed parcels where the forager or one of their clubs holds an approved or active permit. */
export function usableBy(forager: Forager) {
  return sql`p.status = 'listed' and p.id in (select pm.parcel_id from permits pm
      where pm.state in ('approved', 'active') and (pm.holder_user_id = ${forager.id}::text or pm.holder_club_id = any(${uuidArray(forager.clubIds)})))`;
}

type FactsNear = { longitude: number; latitude: number; radiusM: number; forager: Forager };

/**
 * The parcels a check-in may answer with: those the forager may know of. A listed parcel open to
 * requests (anyone sees it on My permits), one of their own, or one on which they or one of their
 * clubs hold a permit in any state (they asked for it or were granted it). Drafts and archived
 * parcels never, whoever owns them or holds a permit there: a draft is not in force yet, and
 * naming another owner's parcel or its distance would trace its boundary for whoever asks.
 */
function knownToForager(forager: Forager) {
  return sql`p.status = 'listed' and (p.open_to_requests or p.owner_id = ${forager.id}::text
      or exists (select 1 from permits k where k.parcel_id = p.id
        and (k.holder_user_id = ${forager.id}::text or k.holder_club_id = any(${uuidArray(forager.clubIds)}))))`;
}

/**
 * The statement behind loadParcelFactsNear: the candidates come through the GiST index on the
 * boundary's geography (ST_DWithin on geography uses it; no scan of every parcel), and only those
 * the forager may know of count. Its generic plan is checked in tests/integration/check-in-plans.test.ts.
 */
export function parcelFactsNearQuery({ longitude, latitude, radiusM, forager }: FactsNear, { measure = true }: { measure?: boolean } = {}) {
  const point = sql`ST_SetSRID(ST_MakePoint(${longitude}::float8, ${latitude}::float8), 4326)`;
  return parcelFactsQuery(forager, sql`${knownToForager(forager)}
      and ST_DWithin(p.boundary::geography, ${measure ? sql`here.pt` : point}::geography, ${radiusM}::float8)`, measure ? { longitude, latitude } : undefined);
}

/**
 * The check-in's candidate statement: the same parcels as parcelFactsNearQuery, measured at the
 * position, with only what depends on the forager or the position (zones, permits) and each
 * parcel's facts_version; the rest comes from the facts kept by version (loadMeasuredParcelsNear).
 * Its generic plan is checked in tests/integration/check-in-plans.test.ts.
 */
export function measuredCandidatesQuery({ longitude, latitude, radiusM, forager }: FactsNear) {
  const at = { longitude, latitude };
  return sql`
    select p.id, p.facts_version::text as facts_version, ${measured(sql`p.boundary`)} as at, ${foragerColumns(forager, at)}
    from parcels p${here(at)}
    where ${knownToForager(forager)} and ST_DWithin(p.boundary::geography, here.pt::geography, ${radiusM}::float8)`;
}

/** The statement that reads the shared facts of parcels by id, for the facts kept by version. */
export function sharedFactsQuery(parcelIds: readonly string[]) {
  return sql`select p.id, p.facts_version::text as facts_version, ${sharedColumns(null)} from parcels p where p.id = any(${uuidArray(parcelIds)})`;
}

/**
 * The parcels the forager may know of whose bounding box holds the position (the GiST index on the
 * boundary), with their boundaries, for a check-in synced from a device.
 */
export async function loadParcelFactsAround(db: Executor, { longitude, latitude, forager }: Omit<FactsNear, 'radiusM'>): Promise<ParcelFacts[]> {
  const rows = await db.execute<Row>(parcelFactsQuery(forager, sql`${knownToForager(forager)}
      and p.boundary && ST_SetSRID(ST_MakePoint(${longitude}::float8, ${latitude}::float8), 4326)`));
  return rows.map(toFacts);
}

/** What every parcel's facts carry, whether its boundary comes with them or PostGIS measured the position against it. */
function commonFacts(p: Row) {
  return {
    id: String(p.id),
    name: String(p.name),
    timeZone: String(p.time_zone),
    nearingThresholdPercent: Number(p.nearing_threshold_percent),
    currentTermsId: (p.current_terms_id as string | null) ?? null,
    closures: p.closures as ParcelFacts['closures'],
    hazards: p.hazards as ParcelFacts['hazards'],
    permits: p.permits as ParcelFacts['permits'],
    allowances: p.allowances as ParcelFacts['allowances'],
  };
}

function toMeasured(p: Row): MeasuredParcelFacts {
  return { ...commonFacts(p), at: p.at as MeasuredParcelFacts['at'], zones: p.zones as MeasuredParcelFacts['zones'] };
}

function toFacts(p: Row): ParcelFacts {
  return { ...commonFacts(p), boundary: p.boundary as ParcelFacts['boundary'], zones: p.zones as ParcelFacts['zones'] };
}

/** The parcels within `radiusM` of a position that the forager may know of, with their boundaries and everything the engine needs. */
export async function loadParcelFactsNear(db: Executor, near: FactsNear): Promise<ParcelFacts[]> {
  return (await executePrepared<Row>(db, parcelFactsNearQuery(near, { measure: false }))).map(toFacts);
}

type SharedFacts = ReturnType<typeof sharedFacts>;

/** The facts every forager shares, from a row of sharedFactsQuery; the allowances carry every permit's limits. */
function sharedFacts(p: Row) {
  const { id: _id, permits: _permits, ...shared } = commonFacts({ ...p, permits: [] });
  return shared;
}

/** Shared facts kept per database pool, by parcel id, with the facts_version they were read at. */
const keptFacts = new WeakMap<object, Map<string, { version: string; facts: SharedFacts }>>();
/** How many parcels' facts a pool keeps: about 2 kB each. The oldest read goes first. */
const keptParcels = 20_000;

function keep(kept: Map<string, { version: string; facts: SharedFacts }>, id: string, entry: { version: string; facts: SharedFacts }) {
  kept.delete(id);
  if (kept.size >= keptParcels) {
    const oldest = kept.keys().next();
    if (!oldest.done) kept.delete(oldest.value);
  }
  kept.set(id, entry);
}

/**
 * The parcels within `radiusM` of a position that the forager may know of, measured there, with
 * everything the engine needs. The candidate statement (measuredCandidatesQuery) reads what depends
 * on the forager and the position, and each parcel's facts_version; the facts every forager shares
 * are kept in the process by parcel and version, and read again (sharedFactsQuery) only for a parcel
 * whose version moved or that is not kept. Triggers raise the version in the same transaction as any
 * change to those facts (drizzle/0022), so a kept version is never out of date for the snapshot that
 * read it. Inside a transaction nothing is kept: the same facts come from the one statement.
 */
export async function loadMeasuredParcelsNear(db: Executor, near: FactsNear): Promise<MeasuredParcelFacts[]> {
  if (!isPool(db)) return (await executePrepared<Row>(db, parcelFactsNearQuery(near))).map(toMeasured);
  let kept = keptFacts.get(db);
  if (!kept) keptFacts.set(db, (kept = new Map()));
  const rows = await executePrepared<Row>(db, measuredCandidatesQuery(near));
  const fresh = new Map<string, { version: string; facts: SharedFacts }>();
  const stale = rows.filter((r) => kept.get(String(r.id))?.version !== String(r.facts_version)).map((r) => String(r.id));
  if (stale.length > 0) {
    for (const r of await executePrepared<Row>(db, sharedFactsQuery(stale))) {
      const entry = { version: String(r.facts_version), facts: sharedFacts(r) };
      fresh.set(String(r.id), entry);
      keep(kept, String(r.id), entry);
    }
  }
  return rows.flatMap((r) => {
    const id = String(r.id);
    const shared = fresh.get(id) ?? kept.get(id);
    // A parcel gone between the two statements is not a candidate.
    if (!shared) return [];
    const permits = r.permits as MeasuredParcelFacts['permits'];
    const theirs = new Set(permits.map((permit) => permit.id));
    const allowances = shared.facts.allowances.map((a) => ({ ...a, limits: a.limits.filter((l) => l.permitId === null || theirs.has(l.permitId)) }));
    return [{ id, ...shared.facts, allowances, permits, at: r.at as MeasuredParcelFacts['at'], zones: r.zones as MeasuredParcelFacts['zones'] }];
  });
}

/** One parcel's facts by its id (a harvest or a correction names its parcel through a visit or an entry). */
export async function loadParcelFacts(db: Executor, { parcelId, forager }: { parcelId: string; forager: Forager }): Promise<ParcelFacts | null> {
  const [row] = await db.execute<Row>(parcelFactsQuery(forager, sql`p.id = ${parcelId}::uuid`));
  return row ? toFacts(row) : null;
}

/**
 * The parcels a forager may harvest on under a permit of theirs or of one of their clubs (approved or
 * active; the engine then checks its dates and fee), with everything the engine needs: the field pack.
 */
export async function loadUsableParcelFacts(db: Executor, { forager, limit }: { forager: Forager; limit: number }): Promise<{ parcels: ParcelFacts[]; usable: number }> {
  const [rows, [count]] = await Promise.all([
    db.execute<Row>(parcelFactsQuery(forager, sql`${usableBy(forager)} order by p.name, p.id limit ${limit}`)),
    db.execute<{ usable: number }>(sql`select count(*)::int as usable from parcels p where ${usableBy(forager)}`),
  ]);
  return { parcels: rows.map(toFacts), usable: count?.usable ?? rows.length };
}

/** The current terms of each parcel, by parcel id. */
export async function loadCurrentTerms(db: Executor, { parcelIds }: { parcelIds: string[] }): Promise<Map<string, { version: number; body: string }>> {
  if (parcelIds.length === 0) return new Map();
  const rows = await db.execute<{ parcel_id: string; version: number; body: string }>(sql`
    select distinct on (t.parcel_id) t.parcel_id, t.version, t.body from terms t
    where t.parcel_id = any(${uuidArray(parcelIds)}) order by t.parcel_id, t.version desc`);
  return new Map(rows.map((r) => [r.parcel_id, { version: r.version, body: r.body }]));
}

/**
 * One parcel's facts by id, only when the forager may know of it (as a check-in answers): an entry
 * synced from a device names its parcel, and one the forager may not know of is not found.
 */
export async function loadKnownParcelFacts(db: Executor, { parcelId, forager }: { parcelId: string; forager: Forager }): Promise<ParcelFacts | null> {
  const [row] = await db.execute<Row>(parcelFactsQuery(forager, sql`p.id = ${parcelId}::uuid and ${knownToForager(forager)}`));
  return row ? toFacts(row) : null;
}

type UsageRow = { parcel_id: string; species_id: string; measure: Measure; visit_id: string | null; visit: string; day: string; season: string; parcel_season: string; clubs: Record<string, string> };

/**
 * What a forager has taken, summed from the kept totals for each window (src/lib/field/counting.ts):
 * the visit's total (of the forager's open visit on the parcel that day, when the window says 'open'),
 * the forager's day under any permit, their season, everyone's season on the parcel, and each of the
 * forager's clubs' season. A season counts every entry whose stored season occurrence overlaps the
 * window's, so changing an allowance's dates never drops what was already taken.
 * Returns the usage per parcel, and the visit each parcel's visit total was read from.
 */
export async function loadUsage(db: Executor, { forager, windows }: { forager: Forager; windows: UsageWindow[] }): Promise<{ usage: Map<string, Usage>; visits: Map<string, string | null> }> {
  if (windows.length === 0) return usageOf([]);
  return usageOf(await executePrepared<UsageRow>(db, usageQuery({ forager, windows })));
}

/** loadUsage's answer from the rows of its statement (usageQuery), however they were sent. */
export function usageOf(rows: readonly Record<string, unknown>[]): { usage: Map<string, Usage>; visits: Map<string, string | null> } {
  const usage = new Map<string, Usage>();
  const visits = new Map<string, string | null>();
  for (const r of rows as UsageRow[]) {
    const parcel = usage.get(r.parcel_id) ?? {};
    const species = (parcel[r.species_id] ??= {});
    const scopes: ScopeUsage = { visit: r.visit, day: r.day, season: r.season, 'parcel-season': r.parcel_season, 'club-season': r.clubs };
    species[r.measure] = scopes;
    usage.set(r.parcel_id, parcel);
    visits.set(r.parcel_id, r.visit_id);
  }
  return { usage, visits };
}

/** The statement behind loadUsage (its generic plan is checked in tests/integration/check-in-plans.test.ts). */
export function usageQuery({ forager, windows }: { forager: Forager; windows: UsageWindow[] }) {
  // Each column is one parameter, an array literal of values the engine or the database made (ids, dates, measures).
  const column = (pick: (w: UsageWindow) => string | null, type: string) => sql`${`{${windows.map((w) => pick(w) ?? 'NULL').join(',')}}`}::${sql.raw(type)}[]`;
  return sql`
    with w as (
      select w.*, case when w.open_visit then (select v.id from visits v where v.forager_id = ${forager.id}::text and v.parcel_id = w.parcel_id
          and v.ended_at is null and v.local_date = w.day) else w.given_visit end as visit_id
      from unnest(${column((w) => w.parcelId, 'uuid')}, ${column((w) => w.speciesId, 'uuid')}, ${column((w) => w.measure, 'measure')},
        ${column((w) => w.seasonStart, 'date')}, ${column((w) => w.seasonEnd, 'date')}, ${column((w) => w.day, 'date')},
        ${column((w) => (w.visit === 'open' ? null : w.visit), 'uuid')}, ${column((w) => String(w.visit === 'open'), 'boolean')})
        as w(parcel_id, species_id, measure, season_start, season_end, day, given_visit, open_visit))
    select w.parcel_id, w.species_id, w.measure, w.visit_id,
      (select coalesce(sum(t.total), 0) from harvest_totals t
        where t.visit_id = w.visit_id and t.species_id = w.species_id and t.measure = w.measure)::text as visit,
      (select coalesce(sum(t.total), 0) from harvest_totals t
        where t.forager_id = ${forager.id}::text and t.parcel_id = w.parcel_id and t.species_id = w.species_id and t.measure = w.measure and t.counted_on = w.day)::text as day,
      (select coalesce(sum(t.total), 0) from harvest_totals t
        where t.forager_id = ${forager.id}::text and t.parcel_id = w.parcel_id and t.species_id = w.species_id and t.measure = w.measure
          and t.season_start <= w.season_end and t.season_end >= w.season_start)::text as season,
      (select coalesce(sum(t.total), 0) from harvest_totals t
        where t.parcel_id = w.parcel_id and t.species_id = w.species_id and t.measure = w.measure
          and t.season_start <= w.season_end and t.season_end >= w.season_start)::text as parcel_season,
      (select coalesce(json_object_agg(c.club_id, c.total), '{}') from (
        select t.club_id, sum(t.total)::text as total from harvest_totals t
        where t.parcel_id = w.parcel_id and t.species_id = w.species_id and t.measure = w.measure and t.club_id = any(${uuidArray(forager.clubIds)})
          and t.season_start <= w.season_end and t.season_end >= w.season_start
        group by t.club_id) c) as clubs
    from w`;
}

/**
 * The boundaries of listed parcels the forager holds a live permit on (personally or through a club),
 * for the Field map: the parcels a check-in can answer with, never a draft or an archived parcel.
 */
export async function listPermittedBoundaries(db: Executor, { foragerId, clubIds, limit }: { foragerId: string; clubIds: string[]; limit: number }) {
  const rows = await db.execute<{ id: string; name: string; boundary: ParcelFacts['boundary'] }>(sql`
    select p.id, p.name, ST_AsGeoJSON(p.boundary, 6)::json as boundary
    from parcels p
    where ${usableBy({ id: foragerId, clubIds })}
    order by p.name, p.id limit ${limit}`);
  return rows.map((r) => ({ id: r.id, name: r.name, boundary: r.boundary }));
}
