import { sql, type SQL } from 'drizzle-orm';
import type { methods } from '../lib/land.schemas';
import type { Dimension, Unit } from '../lib/units';
import type { Executor } from './client';

/** Narrows a forager's ledger; every field is optional and they combine with AND. */
export type LedgerFilters = {
  parcelId?: string;
  speciesId?: string;
  /** Parcel-local dates, 'YYYY-MM-DD', both inclusive. */
  from?: string;
  to?: string;
  /** The year a season occurrence begins in: the 1 Nov 2026 – 15 Mar 2027 season is 2026. */
  seasonYear?: number;
};

/**
 * `allowance`: the allowance window of the parcel and species that holds the entry's date.
 * `calendar-year`: no window holds it (the allowance was changed or removed since), so the
 * calendar year of the local date stands in.
 */
export type SeasonBasis = 'allowance' | 'calendar-year';
export type Method = (typeof methods)[number];

export type LedgerEntry = {
  id: string;
  localDate: string;
  /** ISO 8601 instant in UTC. */
  recordedAt: string;
  parcelId: string;
  parcelName: string;
  speciesId: string;
  speciesName: string;
  scientificName: string;
  method: Method;
  /** Signed decimal strings without trailing zeros; corrections may be negative. */
  quantity: string;
  unit: Unit;
  baseQuantity: string;
  baseUnit: 'g' | 'mL' | 'count';
  dimension: Dimension;
  breach: boolean;
  acknowledgedOver: boolean;
  correctsEntryId: string | null;
  correctionReason: string | null;
  /** Another entry corrects this one. */
  isCorrected: boolean;
  recordedByName: string | null;
  hasPhoto: boolean;
  longitude: number | null;
  latitude: number | null;
  seasonStart: string;
  seasonEnd: string;
  seasonBasis: SeasonBasis;
};

export type LedgerTotal = {
  parcelId: string;
  parcelName: string;
  speciesId: string;
  speciesName: string;
  seasonStart: string;
  seasonEnd: string;
  seasonBasis: SeasonBasis;
  dimension: Dimension;
  baseUnit: 'g' | 'mL' | 'count';
  /** Exact numeric sum of the signed base quantities, as a decimal string. */
  baseTotal: string;
  entries: number;
  corrections: number;
  breaches: number;
};

/**
 * The forager's own entries, each with the season occurrence it counts in. A correction counts in
 * the season of the entry it corrects (followed back through corrections of corrections), so a
 * reversal made after the season closed still lands in the right season. Seasons are month-day
 * windows that may cross New Year (GLOSSARY "season"): when the window crosses and the date is on
 * or before its end, the occurrence began the year before.
 */
function ownEntriesWithSeason(foragerId: string) {
  return sql`
    with recursive own as (
      select * from harvest_entries where forager_id = ${foragerId}
    ),
    chain as (
      select id, local_date as season_date from own where corrects_entry_id is null
      union all
      select c.id, chain.season_date from own c join chain on c.corrects_entry_id = chain.id
    ),
    dated as (
      select own.*, coalesce(chain.season_date, own.local_date) as season_date,
        to_char(coalesce(chain.season_date, own.local_date), 'MMDD')::int as season_md,
        extract(year from coalesce(chain.season_date, own.local_date))::int as season_y
      from own left join chain on chain.id = own.id
    ),
    seasoned as (
      select dated.*,
        case when w.start is null then 'calendar-year' else 'allowance' end as season_basis,
        case when w.start is null or w.start <= w."end" or dated.season_md >= w.start then dated.season_y else dated.season_y - 1 end as season_year,
        w.start_md as window_start, w.end_md as window_end, w.start <= w."end" as window_in_year
      from dated
      left join lateral (
        select s.start, s."end", s.start_md, s.end_md
        from allowances a
        cross join lateral jsonb_array_elements(a.seasons) with ordinality as e(item, n)
        cross join lateral (select replace(e.item ->> 'start', '-', '')::int as start, replace(e.item ->> 'end', '-', '')::int as "end",
          e.item ->> 'start' as start_md, e.item ->> 'end' as end_md) s
        where a.parcel_id = dated.parcel_id and a.species_id = dated.species_id
          and case when s.start <= s."end" then dated.season_md between s.start and s."end"
                   else dated.season_md >= s.start or dated.season_md <= s."end" end
        order by e.n
        limit 1
      ) w on true
    ),
    ledger as (
      select seasoned.*,
        case when season_basis = 'calendar-year' then season_year || '-01-01' else season_year || '-' || window_start end as season_start,
        case when season_basis = 'calendar-year' then season_year || '-12-31'
             when window_in_year then season_year || '-' || window_end
             else (season_year + 1) || '-' || window_end end as season_end,
        case dimension when 'mass' then 'g' when 'volume' then 'mL' else 'count' end as base_unit
      from seasoned
    )`;
}

type EntryRow = {
  id: string; local_date: string; recorded_at: string; parcel_id: string; parcel_name: string; species_id: string; species_name: string;
  scientific_name: string; method: Method; quantity: string; unit: Unit; base_quantity: string; base_unit: LedgerEntry['baseUnit'];
  dimension: Dimension; breach: boolean; acknowledged_over: boolean; corrects_entry_id: string | null; correction_reason: string | null;
  is_corrected: boolean; recorded_by_name: string | null; has_photo: boolean; longitude: number | null; latitude: number | null;
  season_start: string; season_end: string; season_basis: SeasonBasis;
};

/** The forager's own harvest entries, newest recorded first, with names, season and correction links. */
export async function listLedger(db: Executor, { foragerId, filters = {} }: { foragerId: string; filters?: LedgerFilters }): Promise<LedgerEntry[]> {
  const where: SQL[] = [sql`l.forager_id = ${foragerId}`];
  if (filters.parcelId) where.push(sql`l.parcel_id = ${filters.parcelId}::uuid`);
  if (filters.speciesId) where.push(sql`l.species_id = ${filters.speciesId}::uuid`);
  if (filters.from) where.push(sql`l.local_date >= ${filters.from}::date`);
  if (filters.to) where.push(sql`l.local_date <= ${filters.to}::date`);
  if (filters.seasonYear !== undefined) where.push(sql`l.season_year = ${filters.seasonYear}`);
  const rows = await db.execute<EntryRow>(sql`
    ${ownEntriesWithSeason(foragerId)}
    select l.id, to_char(l.local_date, 'YYYY-MM-DD') as local_date,
      to_char(l.created_at at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"') as recorded_at,
      l.parcel_id, p.name as parcel_name, l.species_id, s.common_name as species_name, s.scientific_name,
      l.method, trim_scale(l.quantity)::text as quantity, l.unit, trim_scale(l.base_quantity)::text as base_quantity, l.base_unit,
      l.dimension, l.breach, l.acknowledged_over, l.corrects_entry_id, l.correction_reason,
      exists (select 1 from harvest_entries c where c.corrects_entry_id = l.id and c.forager_id = ${foragerId}) as is_corrected,
      coalesce(u.name, u.email) as recorded_by_name, l.photo_upload_id is not null as has_photo,
      ST_X(l.position) as longitude, ST_Y(l.position) as latitude,
      l.season_start, l.season_end, l.season_basis
    from ledger l
    join parcels p on p.id = l.parcel_id
    join species s on s.id = l.species_id
    left join users u on u.id = l.recorded_by
    where ${sql.join(where, sql` and `)}
    order by l.created_at desc, l.id desc`);
  return rows.map((r) => ({
    id: r.id, localDate: r.local_date, recordedAt: r.recorded_at, parcelId: r.parcel_id, parcelName: r.parcel_name,
    speciesId: r.species_id, speciesName: r.species_name, scientificName: r.scientific_name, method: r.method,
    quantity: r.quantity, unit: r.unit, baseQuantity: r.base_quantity, baseUnit: r.base_unit, dimension: r.dimension,
    breach: r.breach, acknowledgedOver: r.acknowledged_over, correctsEntryId: r.corrects_entry_id, correctionReason: r.correction_reason,
    isCorrected: r.is_corrected, recordedByName: r.recorded_by_name, hasPhoto: r.has_photo,
    longitude: r.longitude === null ? null : Number(r.longitude), latitude: r.latitude === null ? null : Number(r.latitude),
    seasonStart: r.season_start, seasonEnd: r.season_end, seasonBasis: r.season_basis,
  }));
}

type TotalRow = {
  parcel_id: string; parcel_name: string; species_id: string; species_name: string; season_start: string; season_end: string;
  season_basis: SeasonBasis; dimension: Dimension; base_unit: LedgerTotal['baseUnit']; base_total: string; entries: number; corrections: number; breaches: number;
};

/**
 * The forager's totals per parcel × species × season occurrence, in the base unit of each dimension
 * (an entry in another dimension is its own line, never converted). Corrections are signed and count.
 */
export async function ledgerTotals(db: Executor, { foragerId }: { foragerId: string }): Promise<LedgerTotal[]> {
  const rows = await db.execute<TotalRow>(sql`
    ${ownEntriesWithSeason(foragerId)}
    select l.parcel_id, p.name as parcel_name, l.species_id, s.common_name as species_name,
      l.season_start, l.season_end, l.season_basis, l.dimension, l.base_unit,
      trim_scale(sum(l.base_quantity))::text as base_total,
      count(*)::int as entries,
      count(*) filter (where l.corrects_entry_id is not null)::int as corrections,
      count(*) filter (where l.breach)::int as breaches
    from ledger l
    join parcels p on p.id = l.parcel_id
    join species s on s.id = l.species_id
    where l.forager_id = ${foragerId}
    group by l.parcel_id, p.name, l.species_id, s.common_name, l.season_start, l.season_end, l.season_basis, l.dimension, l.base_unit
    order by l.season_start desc, p.name, s.common_name, l.dimension`);
  return rows.map((r) => ({
    parcelId: r.parcel_id, parcelName: r.parcel_name, speciesId: r.species_id, speciesName: r.species_name,
    seasonStart: r.season_start, seasonEnd: r.season_end, seasonBasis: r.season_basis, dimension: r.dimension, baseUnit: r.base_unit,
    baseTotal: r.base_total, entries: Number(r.entries), corrections: Number(r.corrections), breaches: Number(r.breaches),
  }));
}
