import { sql } from 'drizzle-orm';
import type { Forager, LimitScope, ParcelFacts, Usage } from '../lib/field/types';
import { executePrepared, type Executor } from './client';

type Row = Record<string, unknown>;

type FactsNear = { longitude: number; latitude: number; radiusM: number; forager: Forager };

/** The statement behind loadParcelFactsNear (its generic plan is checked in tests/integration/check-in-plans.test.ts). */
export function parcelFactsNearQuery({ longitude, latitude, radiusM, forager }: FactsNear) {
  const clubs = sql`${`{${forager.clubIds.join(',')}}`}::uuid[]`;
  return sql`
    select p.id, p.name, p.time_zone, p.nearing_threshold_percent, ST_AsGeoJSON(p.boundary)::json as boundary,
      (select t.id from terms t where t.parcel_id = p.id order by t.version desc limit 1) as current_terms_id,
      coalesce((select json_agg(json_build_object('id', z.id, 'name', z.name, 'reason', z.reason, 'boundary', ST_AsGeoJSON(z.boundary)::json))
        from no_harvest_zones z where z.parcel_id = p.id), '[]') as zones,
      coalesce((select json_agg(json_build_object('startsOn', c.starts_on::text, 'endsOn', c.ends_on::text, 'reason', c.reason))
        from closures c where c.parcel_id = p.id), '[]') as closures,
      coalesce((select json_agg(json_build_object('kind', h.kind, 'title', h.title, 'detail', h.detail) order by h.title)
        from hazards h where h.parcel_id = p.id), '[]') as hazards,
      coalesce((select json_agg(json_build_object('id', pm.id, 'holderUserId', pm.holder_user_id, 'holderClubId', pm.holder_club_id, 'state', pm.state,
          'startsOn', pm.starts_on::text, 'endsOn', pm.ends_on::text, 'feeMinor', pm.fee_minor, 'feePaid', pm.fee_paid_at is not null, 'acceptedTermsId', pm.accepted_terms_id))
        from permits pm where pm.parcel_id = p.id and (pm.holder_user_id = ${forager.id}::text or pm.holder_club_id = any(${clubs}))), '[]') as permits,
      coalesce((select json_agg(json_build_object('speciesId', s.id, 'commonName', s.common_name, 'scientificName', s.scientific_name,
          'seasons', a.seasons, 'methods', a.methods, 'cautions', s.cautions, 'lookalikes', s.lookalikes,
          'limits', coalesce((select json_agg(json_build_object('scope', l.scope, 'quantity', l.quantity::text, 'unit', l.unit, 'permitId', l.permit_id))
            from limits l left join permits lp on lp.id = l.permit_id
            where l.allowance_id = a.id and (l.permit_id is null or lp.holder_user_id = ${forager.id}::text or lp.holder_club_id = any(${clubs}))), '[]'))
          order by s.common_name)
        from allowances a join species s on s.id = a.species_id where a.parcel_id = p.id), '[]') as allowances
    from parcels p
    where p.status <> 'archived'
      and ST_DWithin(p.boundary::geography, ST_SetSRID(ST_MakePoint(${longitude}::float8, ${latitude}::float8), 4326)::geography, ${radiusM}::float8)`;
}

/**
 * Everything the engine needs about the parcels within `radiusM` of a position, for one forager,
 * in one statement: the candidates come through the GiST index on the boundary's geography
 * (ST_DWithin on geography uses it; no scan of every parcel), and each candidate's zones,
 * closures, hazards, permits and allowances are gathered by key beside it.
 */
export async function loadParcelFactsNear(db: Executor, near: FactsNear): Promise<ParcelFacts[]> {
  const rows = await executePrepared<Row>(db, parcelFactsNearQuery(near));
  return rows.map((p) => ({
    id: String(p.id),
    name: String(p.name),
    timeZone: String(p.time_zone),
    nearingThresholdPercent: Number(p.nearing_threshold_percent),
    boundary: p.boundary as ParcelFacts['boundary'],
    currentTermsId: (p.current_terms_id as string | null) ?? null,
    zones: p.zones as ParcelFacts['zones'],
    closures: p.closures as ParcelFacts['closures'],
    hazards: p.hazards as ParcelFacts['hazards'],
    permits: p.permits as ParcelFacts['permits'],
    allowances: p.allowances as ParcelFacts['allowances'],
  }));
}

/** Per species: its current season occurrence, and the dimension its limits measure (only those entries count). */
export type UsageWindow = { speciesId: string; seasonStart: string | null; seasonEnd: string | null; dimension: 'mass' | 'volume' | 'count' | null };

/**
 * Sums of the ledger for one forager on one parcel, per species and scope, in base units. Corrections
 * are signed, so they count. `clubPermitId` sums the club-wide tally of everyone under that permit.
 */
export async function usageOnParcel(
  db: Executor,
  { parcelId, foragerId, visitId, localDate, clubPermitId, windows }: { parcelId: string; foragerId: string; visitId: string | null; localDate: string; clubPermitId: string | null; windows: UsageWindow[] },
): Promise<Usage> {
  if (windows.length === 0) return {};
  const species = sql`${`{${windows.map((w) => w.speciesId).join(',')}}`}::uuid[]`;
  const starts = sql`${`{${windows.map((w) => w.seasonStart ?? 'NULL').join(',')}}`}::date[]`;
  const ends = sql`${`{${windows.map((w) => w.seasonEnd ?? 'NULL').join(',')}}`}::date[]`;
  const dimensions = sql`${`{${windows.map((w) => w.dimension ?? 'NULL').join(',')}}`}::dimension[]`;
  // A correction counts where its entry counted: on the original's day, visit and permit.
  const rows = await executePrepared<{ species_id: string; visit: string; day: string; season: string; parcel_season: string; club_season: string }>(db, sql`
    select w.species_id,
      coalesce(sum(e.base_quantity) filter (where coalesce(o.visit_id, e.visit_id) = ${visitId}::uuid), 0)::text as visit,
      coalesce(sum(e.base_quantity) filter (where e.forager_id = ${foragerId}::text and coalesce(o.local_date, e.local_date) = ${localDate}::date), 0)::text as day,
      coalesce(sum(e.base_quantity) filter (where e.forager_id = ${foragerId}::text and coalesce(o.local_date, e.local_date) between w.season_start and w.season_end), 0)::text as season,
      coalesce(sum(e.base_quantity) filter (where coalesce(o.local_date, e.local_date) between w.season_start and w.season_end), 0)::text as parcel_season,
      coalesce(sum(e.base_quantity) filter (where coalesce(o.permit_id, e.permit_id) = ${clubPermitId}::uuid and coalesce(o.local_date, e.local_date) between w.season_start and w.season_end), 0)::text as club_season
    from unnest(${species}, ${starts}, ${ends}, ${dimensions}) as w(species_id, season_start, season_end, dimension)
    left join harvest_entries e on e.parcel_id = ${parcelId}::uuid and e.species_id = w.species_id and (w.dimension is null or e.dimension = w.dimension)
    left join harvest_entries o on o.id = e.corrects_entry_id
    group by w.species_id`);
  const usage: Usage = {};
  for (const r of rows) {
    const scopes: Partial<Record<LimitScope, string>> = { visit: r.visit, day: r.day, season: r.season, 'parcel-season': r.parcel_season, 'club-season': r.club_season };
    usage[r.species_id] = scopes;
  }
  return usage;
}

/** The boundaries of parcels the forager holds a live permit on (personally or through a club), for the Field map. */
export async function listPermittedBoundaries(db: Executor, { foragerId, clubIds }: { foragerId: string; clubIds: string[] }) {
  const clubs = sql`${`{${clubIds.join(',')}}`}::uuid[]`;
  const rows = await db.execute<{ id: string; name: string; boundary: ParcelFacts['boundary'] }>(sql`
    select p.id, p.name, ST_AsGeoJSON(p.boundary, 6)::json as boundary
    from parcels p
    where p.id in (select pm.parcel_id from permits pm
      where pm.state in ('approved', 'active') and (pm.holder_user_id = ${foragerId} or pm.holder_club_id = any(${clubs})))
    order by p.name`);
  return rows.map((r) => ({ id: r.id, name: r.name, boundary: r.boundary }));
}
