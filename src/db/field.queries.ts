import { sql } from 'drizzle-orm';
import type { Forager, LimitScope, ParcelFacts, Usage } from '../lib/field/types';
import type { Executor } from './client';

/**
 * Parcels within `radiusM` of a position, through the GiST index on the boundary's geography
 * (ST_DWithin on geography uses it; a scan of every parcel never happens).
 */
export async function candidateParcelIds(db: Executor, { longitude, latitude, radiusM }: { longitude: number; latitude: number; radiusM: number }) {
  const rows = await db.execute<{ id: string }>(sql`
    select id from parcels
    where status <> 'archived'
      and ST_DWithin(boundary::geography, ST_SetSRID(ST_MakePoint(${longitude}, ${latitude}), 4326)::geography, ${radiusM})`);
  return rows.map((r) => r.id);
}

type Row = Record<string, unknown>;

/** Everything the engine needs about the candidate parcels, for one forager: six indexed queries in parallel. */
export async function loadParcelFacts(db: Executor, { parcelIds, forager }: { parcelIds: string[]; forager: Forager }): Promise<ParcelFacts[]> {
  if (parcelIds.length === 0) return [];
  const ids = sql`${`{${parcelIds.join(',')}}`}::uuid[]`;
  const clubs = sql`${`{${forager.clubIds.join(',')}}`}::uuid[]`;
  const [parcels, zones, closures, hazards, permits, allowances] = await Promise.all([
    db.execute<Row>(sql`
      select p.id, p.name, p.time_zone, p.nearing_threshold_percent, ST_AsGeoJSON(p.boundary)::json as boundary,
        (select t.id from terms t where t.parcel_id = p.id order by t.version desc limit 1) as current_terms_id
      from parcels p where p.id = any(${ids})`),
    db.execute<Row>(sql`select parcel_id, id, name, reason, ST_AsGeoJSON(boundary)::json as boundary from no_harvest_zones where parcel_id = any(${ids})`),
    db.execute<Row>(sql`select parcel_id, starts_on::text, ends_on::text, reason from closures where parcel_id = any(${ids})`),
    db.execute<Row>(sql`select parcel_id, kind, title, detail from hazards where parcel_id = any(${ids}) order by title`),
    db.execute<Row>(sql`
      select parcel_id, id, holder_user_id, holder_club_id, state, starts_on::text, ends_on::text, fee_minor, fee_paid_at is not null as fee_paid, accepted_terms_id
      from permits where parcel_id = any(${ids}) and (holder_user_id = ${forager.id} or holder_club_id = any(${clubs}))`),
    db.execute<Row>(sql`
      select a.parcel_id, s.id as species_id, s.common_name, s.scientific_name, a.seasons, a.methods::text[] as methods, s.cautions, s.lookalikes,
        coalesce((select json_agg(json_build_object('scope', l.scope, 'quantity', l.quantity::text, 'unit', l.unit, 'permitId', l.permit_id))
          from limits l left join permits lp on lp.id = l.permit_id
          where l.allowance_id = a.id and (l.permit_id is null or lp.holder_user_id = ${forager.id} or lp.holder_club_id = any(${clubs}))), '[]'::json) as limits
      from allowances a join species s on s.id = a.species_id
      where a.parcel_id = any(${ids}) order by s.common_name`),
  ]);
  const of = (rows: Row[], parcelId: unknown) => rows.filter((r) => r.parcel_id === parcelId);
  return parcels.map((p) => ({
    id: String(p.id),
    name: String(p.name),
    timeZone: String(p.time_zone),
    nearingThresholdPercent: Number(p.nearing_threshold_percent),
    boundary: p.boundary as ParcelFacts['boundary'],
    currentTermsId: (p.current_terms_id as string | null) ?? null,
    zones: of(zones, p.id).map((z) => ({ id: String(z.id), name: String(z.name), reason: String(z.reason), boundary: z.boundary as ParcelFacts['boundary'] })),
    closures: of(closures, p.id).map((c) => ({ startsOn: String(c.starts_on), endsOn: String(c.ends_on), reason: String(c.reason) })),
    hazards: of(hazards, p.id).map((h) => ({ kind: String(h.kind), title: String(h.title), detail: String(h.detail) })),
    permits: of(permits, p.id).map((r) => ({
      id: String(r.id),
      holderUserId: (r.holder_user_id as string | null) ?? null,
      holderClubId: (r.holder_club_id as string | null) ?? null,
      state: r.state as ParcelFacts['permits'][number]['state'],
      startsOn: String(r.starts_on),
      endsOn: String(r.ends_on),
      feeMinor: r.fee_minor === null ? null : Number(r.fee_minor),
      feePaid: Boolean(r.fee_paid),
      acceptedTermsId: (r.accepted_terms_id as string | null) ?? null,
    })),
    allowances: of(allowances, p.id).map((a) => ({
      speciesId: String(a.species_id),
      commonName: String(a.common_name),
      scientificName: String(a.scientific_name),
      seasons: a.seasons as ParcelFacts['allowances'][number]['seasons'],
      methods: a.methods as ParcelFacts['allowances'][number]['methods'],
      limits: a.limits as ParcelFacts['allowances'][number]['limits'],
      cautions: a.cautions as string[],
      lookalikes: a.lookalikes as ParcelFacts['allowances'][number]['lookalikes'],
    })),
  }));
}

export type UsageWindow = { speciesId: string; seasonStart: string | null; seasonEnd: string | null };

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
  const rows = await db.execute<{ species_id: string; visit: string; day: string; season: string; parcel_season: string; club_season: string }>(sql`
    select w.species_id,
      coalesce(sum(e.base_quantity) filter (where e.visit_id = ${visitId}::uuid), 0)::text as visit,
      coalesce(sum(e.base_quantity) filter (where e.forager_id = ${foragerId} and e.local_date = ${localDate}::date), 0)::text as day,
      coalesce(sum(e.base_quantity) filter (where e.forager_id = ${foragerId} and e.local_date between w.season_start and w.season_end), 0)::text as season,
      coalesce(sum(e.base_quantity) filter (where e.local_date between w.season_start and w.season_end), 0)::text as parcel_season,
      coalesce(sum(e.base_quantity) filter (where e.permit_id = ${clubPermitId}::uuid and e.local_date between w.season_start and w.season_end), 0)::text as club_season
    from unnest(${species}, ${starts}, ${ends}) as w(species_id, season_start, season_end)
    left join harvest_entries e on e.parcel_id = ${parcelId} and e.species_id = w.species_id
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
