import { sql, type SQL } from 'drizzle-orm';
import type { methods } from '../lib/land.schemas';
import type { Measure, Unit } from '../lib/units';
import type { Executor } from './client';

/** Narrows a forager's ledger; every field is optional and they combine with AND. */
export type LedgerFilters = {
  parcelId?: string;
  speciesId?: string;
  /** Parcel-local dates the entries count on, 'YYYY-MM-DD', both inclusive. */
  from?: string;
  to?: string;
  /** The year a season occurrence begins in: the 1 Nov 2026 – 15 Mar 2027 season is 2026. */
  seasonYear?: number;
};

export type Method = (typeof methods)[number];

export type LedgerQuantity = { measure: Measure; quantity: string; unit: Unit; baseQuantity: string };

export type LedgerEntry = {
  id: string;
  /** The parcel-local day it was recorded. */
  localDate: string;
  /** The parcel-local day it counts on: its own, or for a correction its chain's first entry's. */
  countedOn: string;
  /** ISO 8601 instant in UTC; shown in the parcel's zone. */
  recordedAt: string;
  timeZone: string;
  parcelId: string;
  parcelName: string;
  speciesId: string;
  speciesName: string;
  scientificName: string;
  method: Method;
  /** One per measure, signed decimal strings without trailing zeros; corrections may be negative. */
  quantities: LedgerQuantity[];
  breach: boolean;
  acknowledgedOver: boolean;
  correctsEntryId: string | null;
  /** The first entry of its correction chain; null for an entry that corrects nothing. */
  rootEntryId: string | null;
  correctionReason: string | null;
  /** Another entry corrects this one. */
  isCorrected: boolean;
  recordedByName: string | null;
  hasPhoto: boolean;
  /** The entry's photo (GET /api/photos/{id}: the forager's own original). */
  photoUploadId: string | null;
  longitude: number | null;
  latitude: number | null;
  /** The season occurrence it counts in, stored on it when it was written. */
  seasonStart: string;
  seasonEnd: string;
};

export type LedgerTotal = {
  parcelId: string;
  parcelName: string;
  speciesId: string;
  speciesName: string;
  seasonStart: string;
  seasonEnd: string;
  measure: Measure;
  /** Exact sum of the signed base quantities (g, mL, or items), as a decimal string. */
  baseTotal: string;
  entries: number;
  corrections: number;
  breaches: number;
};

type EntryRow = {
  id: string; local_date: string; counted_on: string; recorded_at: string; time_zone: string; parcel_id: string; parcel_name: string; species_id: string; species_name: string;
  scientific_name: string; method: Method; quantities: LedgerQuantity[]; breach: boolean; acknowledged_over: boolean; corrects_entry_id: string | null;
  root_entry_id: string | null; correction_reason: string | null; is_corrected: boolean; recorded_by_name: string | null; has_photo: boolean; photo_upload_id: string | null;
  longitude: number | null; latitude: number | null; season_start: string; season_end: string;
};

/** The forager's own harvest entries, newest recorded first, with names, the facts they count by and their correction links. */
export async function listLedger(db: Executor, { foragerId, filters = {} }: { foragerId: string; filters?: LedgerFilters }): Promise<LedgerEntry[]> {
  const where: SQL[] = [sql`e.forager_id = ${foragerId}`];
  if (filters.parcelId) where.push(sql`e.parcel_id = ${filters.parcelId}::uuid`);
  if (filters.speciesId) where.push(sql`e.species_id = ${filters.speciesId}::uuid`);
  if (filters.from) where.push(sql`e.counted_on >= ${filters.from}::date`);
  if (filters.to) where.push(sql`e.counted_on <= ${filters.to}::date`);
  if (filters.seasonYear !== undefined) where.push(sql`extract(year from e.season_start) = ${filters.seasonYear}`);
  const rows = await db.execute<EntryRow>(sql`
    select e.id, e.local_date::text, e.counted_on::text,
      to_char(e.created_at at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"') as recorded_at, p.time_zone,
      e.parcel_id, p.name as parcel_name, e.species_id, s.common_name as species_name, s.scientific_name, e.method,
      (select json_agg(json_build_object('measure', q.measure, 'quantity', trim_scale(q.quantity)::text, 'unit', q.unit, 'baseQuantity', trim_scale(q.base_quantity)::text) order by q.measure)
        from harvest_quantities q where q.entry_id = e.id) as quantities,
      e.breach, e.acknowledged_over, e.corrects_entry_id, e.root_entry_id, e.correction_reason,
      exists (select 1 from harvest_entries c where c.corrects_entry_id = e.id and c.forager_id = ${foragerId}) as is_corrected,
      coalesce(u.name, u.email) as recorded_by_name, e.photo_upload_id is not null as has_photo, e.photo_upload_id,
      ST_X(e.position) as longitude, ST_Y(e.position) as latitude, e.season_start::text, e.season_end::text
    from harvest_entries e
    join parcels p on p.id = e.parcel_id
    join species s on s.id = e.species_id
    left join users u on u.id = e.recorded_by
    where ${sql.join(where, sql` and `)}
    order by e.created_at desc, e.id desc`);
  return rows.map((r) => ({
    id: r.id, localDate: r.local_date, countedOn: r.counted_on, recordedAt: r.recorded_at, timeZone: r.time_zone, parcelId: r.parcel_id, parcelName: r.parcel_name,
    speciesId: r.species_id, speciesName: r.species_name, scientificName: r.scientific_name, method: r.method, quantities: r.quantities ?? [],
    breach: r.breach, acknowledgedOver: r.acknowledged_over, correctsEntryId: r.corrects_entry_id, rootEntryId: r.root_entry_id, correctionReason: r.correction_reason,
    isCorrected: r.is_corrected, recordedByName: r.recorded_by_name, hasPhoto: r.has_photo, photoUploadId: r.photo_upload_id,
    longitude: r.longitude === null ? null : Number(r.longitude), latitude: r.latitude === null ? null : Number(r.latitude),
    seasonStart: r.season_start, seasonEnd: r.season_end,
  }));
}

type TotalRow = {
  parcel_id: string; parcel_name: string; species_id: string; species_name: string; season_start: string; season_end: string;
  measure: Measure; base_total: string; entries: number; corrections: number; breaches: number;
};

/**
 * The forager's totals per parcel × species × season occurrence × measure, from the kept totals (an
 * amount in another measure is its own line, never converted); the counts of entries, corrections
 * and breaches from the entries themselves. Corrections are signed and count where their chain began.
 */
export async function ledgerTotals(db: Executor, { foragerId }: { foragerId: string }): Promise<LedgerTotal[]> {
  const rows = await db.execute<TotalRow>(sql`
    with sums as (
      select t.parcel_id, t.species_id, t.season_start, t.season_end, t.measure, sum(t.total) as total
      from harvest_totals t where t.forager_id = ${foragerId}
      group by 1, 2, 3, 4, 5),
    counts as (
      select e.parcel_id, e.species_id, e.season_start, e.season_end, q.measure,
        count(*) filter (where e.corrects_entry_id is null)::int as entries,
        count(*) filter (where e.corrects_entry_id is not null)::int as corrections,
        count(*) filter (where e.breach)::int as breaches
      from harvest_entries e join harvest_quantities q on q.entry_id = e.id
      where e.forager_id = ${foragerId}
      group by 1, 2, 3, 4, 5)
    select s.parcel_id, p.name as parcel_name, s.species_id, sp.common_name as species_name, s.season_start::text, s.season_end::text, s.measure,
      trim_scale(s.total)::text as base_total, coalesce(c.entries, 0) as entries, coalesce(c.corrections, 0) as corrections, coalesce(c.breaches, 0) as breaches
    from sums s
    join parcels p on p.id = s.parcel_id
    join species sp on sp.id = s.species_id
    left join counts c on c.parcel_id = s.parcel_id and c.species_id = s.species_id and c.season_start = s.season_start and c.season_end = s.season_end and c.measure = s.measure
    order by s.season_start desc, p.name, sp.common_name, s.measure`);
  return rows.map((r) => ({
    parcelId: r.parcel_id, parcelName: r.parcel_name, speciesId: r.species_id, speciesName: r.species_name,
    seasonStart: r.season_start, seasonEnd: r.season_end, measure: r.measure,
    baseTotal: r.base_total, entries: Number(r.entries), corrections: Number(r.corrections), breaches: Number(r.breaches),
  }));
}
