import { sql } from 'drizzle-orm';
import { seasonAsOf, talliesFor, worstState } from '../lib/field';
import type { AllowanceFacts, LimitScope, PermitFacts, Tally, TallyState } from '../lib/field/types';
import { units, type Unit } from '../lib/units';

import { isPool, type Executor } from './client';

/**
 * Whose view an audit is. A steward sees a club's entries: those made under the club's permits, on
 * the parcels those permits cover, and never exact positions. A landowner sees every entry on their
 * own parcels (or one of them), positions included. Nobody sees a forager's other entries.
 */
export type AuditScope = { clubId: string; parcelId?: string } | { ownerId: string; parcelId?: string };

const isClub = (scope: AuditScope): scope is { clubId: string; parcelId?: string } => 'clubId' in scope;
const uuidArray = (ids: readonly string[]) => sql`${`{${ids.join(',')}}`}::uuid[]`;

type AuditParcel = {
  id: string;
  name: string;
  ownerId: string;
  timeZone: string;
  nearingThresholdPercent: number;
  allowances: AllowanceFacts[];
  permits: (PermitFacts & { holderName: string })[];
};

/**
 * The parcels in view, each with its allowances (every limit, the permits' own included) and the
 * permits in view. With `withTotals`, only those with anything in the kept totals: a club's permits
 * or an owner's parcels can run to many thousands, most of them never harvested.
 */
export async function loadAuditParcels(db: Executor, scope: AuditScope, { withTotals = false } = {}): Promise<AuditParcel[]> {
  const harvested = withTotals ? sql`and p.id in (select h.parcel_id from harvested_parcels h)` : sql``;
  const inView = isClub(scope)
    ? sql`p.id in (select cp.parcel_id from permits cp where cp.holder_club_id = ${scope.clubId}::uuid and cp.state in ('approved', 'active', 'expired', 'revoked')) ${scope.parcelId ? sql`and p.id = ${scope.parcelId}::uuid` : sql``}`
    : scope.parcelId
      ? sql`p.owner_id = ${scope.ownerId} and p.id = ${scope.parcelId}::uuid`
      : sql`p.owner_id = ${scope.ownerId}`;
  const permitInView = isClub(scope) ? sql`pm.holder_club_id = ${scope.clubId}::uuid` : sql`true`;
  const rows = await db.execute<{ id: string; name: string; owner_id: string; time_zone: string; nearing_threshold_percent: number; allowances: AllowanceFacts[]; permits: (PermitFacts & { holderName: string })[] }>(sql`
    select p.id, p.name, p.owner_id, p.time_zone, p.nearing_threshold_percent,
      coalesce((select json_agg(json_build_object('speciesId', s.id, 'commonName', s.common_name, 'scientificName', s.scientific_name,
          'seasons', a.seasons, 'methods', a.methods, 'cautions', s.cautions, 'lookalikes', s.lookalikes,
          'limits', coalesce((select json_agg(json_build_object('scope', l.scope, 'quantity', trim_scale(l.quantity)::text, 'unit', l.unit, 'permitId', l.permit_id) order by l.permit_id nulls first, l.scope)
            from limits l where l.allowance_id = a.id), '[]'))
          order by s.common_name)
        from allowances a join species s on s.id = a.species_id where a.parcel_id = p.id), '[]') as allowances,
      coalesce((select json_agg(json_build_object('id', pm.id, 'holderUserId', pm.holder_user_id, 'holderClubId', pm.holder_club_id, 'state', pm.state,
          'startsOn', pm.starts_on::text, 'endsOn', pm.ends_on::text, 'feeMinor', pm.fee_minor, 'feePaid', pm.fee_paid_at is not null,
          'acceptedTermsId', pm.accepted_terms_id, 'holderName', coalesce(hc.name, hu.name, hu.email)))
        from permits pm left join clubs hc on hc.id = pm.holder_club_id left join users hu on hu.id = pm.holder_user_id
        where pm.parcel_id = p.id and ${permitInView}), '[]') as permits
    from parcels p
    where ${inView} ${harvested}
    order by p.name`);
  return rows.map((r) => ({
    id: r.id,
    name: r.name,
    ownerId: r.owner_id,
    timeZone: r.time_zone,
    nearingThresholdPercent: Number(r.nearing_threshold_percent),
    allowances: r.allowances,
    permits: r.permits,
  }));
}

/** The season each allowance in view covers on `asOf`, and the dimension its limits measure. */
export type AuditWindow = { parcel: AuditParcel; allowance: AllowanceFacts; start: string; end: string; dimension: 'mass' | 'volume' | 'count' | null };
type Window = AuditWindow;

export function windowsOf(parcels: AuditParcel[], asOf: string): Window[] {
  return parcels.flatMap((parcel) =>
    parcel.allowances.flatMap((allowance) => {
      const season = seasonAsOf(allowance.seasons, asOf);
      if (!season) return [];
      const measured = allowance.limits.find((l) => l.permitId === null) ?? allowance.limits[0];
      return [{ parcel, allowance, start: season.start, end: season.end, dimension: measured ? units[measured.unit].dimension : null }];
    }),
  );
}

/** The windows as a table: (parcel_id, species_id, season_start, season_end, dimension). */
function windowsTable(windows: Window[]) {
  return sql`
    select * from unnest(${uuidArray(windows.map((w) => w.parcel.id))}, ${uuidArray(windows.map((w) => w.allowance.speciesId))},
      ${`{${windows.map((w) => w.start).join(',')}}`}::date[], ${`{${windows.map((w) => w.end).join(',')}}`}::date[],
      ${`{${windows.map((w) => w.dimension ?? 'NULL').join(',')}}`}::dimension[]) as w(parcel_id, species_id, season_start, season_end, dimension)`;
}

/**
 * The ledger as the audit counts it: each entry (a correction on its original's day, visit and
 * permit, as the field tallies count it) of an allowance's species on its parcel, in its season,
 * in the limits' dimension. The lower date bound is on the entry itself, so the index on
 * (parcel, species, local date) narrows the scan; a correction is never dated before its entry.
 */
function countedEntries(windows: Window[], scope: AuditScope) {
  const permitFilter = isClub(scope) ? sql`and coalesce(o.permit_id, e.permit_id) in (select cp.id from permits cp where cp.holder_club_id = ${scope.clubId}::uuid)` : sql``;
  return sql`
    w as (${windowsTable(windows)}),
    counted as (
      select e.id, e.parcel_id, e.species_id, e.forager_id, coalesce(o.permit_id, e.permit_id) as permit_id,
        coalesce(o.local_date, e.local_date) as local_date, coalesce(o.visit_id, e.visit_id) as visit_id, e.base_quantity, e.breach
      from w
      join harvest_entries e on e.parcel_id = w.parcel_id and e.species_id = w.species_id and e.local_date >= w.season_start
        and (w.dimension is null or e.dimension = w.dimension)
      left join harvest_entries o on o.id = e.corrects_entry_id
      where coalesce(o.local_date, e.local_date) between w.season_start and w.season_end ${permitFilter})`;
}

export type AuditRow = {
  parcelId: string;
  parcelName: string;
  speciesId: string;
  commonName: string;
  scientificName: string;
  season: { start: string; end: string };
  foragerId: string;
  foragerName: string;
  permitId: string | null;
  holderName: string;
  /** Visit and day tallies hold the busiest visit and the busiest day; season tallies the sum. */
  tallies: Tally[];
  state: TallyState | null;
  entries: number;
  breaches: number;
  /** What this forager took of the species this season, in the base unit of its dimension (g, mL or count). */
  seasonTotalBase: string;
};

export type AuditChartBar = { parcelId: string; parcelName: string; speciesId: string; commonName: string; scope: LimitScope; percent: number; state: TallyState; used: string; limit: string; unit: Unit };

export type Audit = { asOf: string; rows: AuditRow[]; chart: AuditChartBar[] };

type SumRow = {
  parcel_id: string;
  species_id: string;
  forager_id: string;
  forager_name: string;
  permit_id: string | null;
  season_total: string;
  day_peak: string;
  visit_peak: string;
  entries: number;
  breaches: number;
  parcel_total: string;
  club_total: string;
};

/**
 * Per window, the kept totals of its season grouped by forager and permit, with the parcel's and
 * the permit's season totals; in a club's view, the club's permits only.
 */
export function auditSumsQuery(windows: Window[], scope: AuditScope) {
  // A club's view holds only its own permits (loadAuditParcels loaded those alone).
  const inClub = isClub(scope) ? sql`m.permit_id = any(${uuidArray([...new Set(windows.flatMap((w) => w.parcel.permits.map((pm) => pm.id)))])})` : sql`true`;
  // Per window, the kept totals of its season (harvest_totals, read from its index alone) grouped
  // by forager and permit: the season's sum, the busiest day and visit (each row carries its day's
  // and its visit's whole total), entries and breaches. The parcel's and the permit's season totals
  // are sums of those, every holder's counted in the first, before a club's view keeps its own.
  return sql`
    with w as (${windowsTable(windows)}),
    member as (
      select w.parcel_id, w.species_id, m.*
      from w cross join lateral (
        select t.forager_id, t.permit_id, sum(t.total) as season_total, max(t.day_total) as day_peak, max(t.visit_total) as visit_peak,
          sum(t.entries)::int as entries, sum(t.breaches)::int as breaches
        from harvest_totals t
        where t.parcel_id = w.parcel_id and t.species_id = w.species_id and t.local_date between w.season_start and w.season_end
          and (w.dimension is null or t.dimension = w.dimension)
        group by t.forager_id, t.permit_id) m),
    totalled as (
      select member.*, sum(season_total) over (partition by parcel_id, species_id) as parcel_total,
        sum(season_total) over (partition by parcel_id, species_id, permit_id) as club_total
      from member)
    select m.parcel_id, m.species_id, m.forager_id, coalesce(u.name, u.email) as forager_name, m.permit_id,
      trim_scale(m.season_total)::text as season_total, trim_scale(m.day_peak)::text as day_peak, coalesce(trim_scale(m.visit_peak), 0)::text as visit_peak,
      m.entries, m.breaches, trim_scale(m.parcel_total)::text as parcel_total, trim_scale(m.club_total)::text as club_total
    from totalled m
    join users u on u.id = m.forager_id
    where ${inClub}`;
}

/**
 * Tallies by parcel × species × forager (under one permit) against every limit in force, for the
 * season in progress or last ended on `asOf` (a parcel-local date), by parcel, species and forager
 * name. The kept totals of the ledger are summed in SQL; the limit engine of the field screen turns
 * the sums into tallies, so both agree by construction.
 */
export async function auditTallies(db: Executor, scope: AuditScope, { asOf }: { asOf: string }): Promise<Audit> {
  const parcels = await loadAuditParcels(db, scope, { withTotals: true });
  const windows = windowsOf(parcels, asOf);
  if (windows.length === 0) return { asOf, rows: [], chart: [] };
  // The windows in two halves on two connections at once when there is a pool (PostgreSQL runs one
  // statement on one core). A window is one parcel and species, and no sum crosses windows.
  const halves = windows.length > 1 && isPool(db) ? [windows.slice(0, windows.length >> 1), windows.slice(windows.length >> 1)] : [windows];
  const sums = (await Promise.all(halves.map((part) => db.execute<SumRow>(auditSumsQuery(part, scope))))).flat();

  const windowOf = new Map(windows.map((w) => [`${w.parcel.id}|${w.allowance.speciesId}`, w]));
  const rows: AuditRow[] = [];
  for (const s of sums) {
    const w = windowOf.get(`${s.parcel_id}|${s.species_id}`);
    if (!w) continue;
    const permit = w.parcel.permits.find((p) => p.id === s.permit_id) ?? null;
    const clubPermit = permit?.holderClubId ?? null;
    const usage = { [s.species_id]: { visit: s.visit_peak, day: s.day_peak, season: s.season_total, 'parcel-season': s.parcel_total, 'club-season': s.club_total } };
    const tallies = talliesFor(w.allowance, usage, { forager: { id: s.forager_id, clubIds: clubPermit ? [clubPermit] : [] }, permit, thresholdPercent: w.parcel.nearingThresholdPercent });
    rows.push({
      parcelId: w.parcel.id,
      parcelName: w.parcel.name,
      speciesId: w.allowance.speciesId,
      commonName: w.allowance.commonName,
      scientificName: w.allowance.scientificName,
      season: { start: w.start, end: w.end },
      foragerId: s.forager_id,
      foragerName: s.forager_name,
      permitId: s.permit_id,
      holderName: permit?.holderName ?? 'no permit',
      tallies,
      state: worstState(tallies.map((t) => t.state)),
      entries: s.entries,
      breaches: s.breaches,
      seasonTotalBase: s.season_total,
    });
  }
  // By code point, as the database's C collation orders text.
  const keyOf = (r: AuditRow) => [r.parcelName, r.parcelId, r.commonName, r.speciesId, r.foragerName, r.foragerId, r.permitId ?? ''].join('\u0000');
  const sorted = rows.map((row) => ({ row, key: keyOf(row) })).sort((a, b) => (a.key < b.key ? -1 : a.key > b.key ? 1 : 0)).map((k) => k.row);
  return { asOf, rows: sorted, chart: chartBars(sorted) };
}

/** Per parcel, species and scope: the highest tally among the rows (a shared cap is the same in each). */
function chartBars(rows: AuditRow[]): AuditChartBar[] {
  const bars = new Map<string, AuditChartBar>();
  for (const row of rows) {
    for (const t of row.tallies) {
      const key = `${row.parcelId}|${row.speciesId}|${t.scope}`;
      const current = bars.get(key);
      if (!current || t.percent > current.percent) {
        bars.set(key, { parcelId: row.parcelId, parcelName: row.parcelName, speciesId: row.speciesId, commonName: row.commonName, scope: t.scope, percent: t.percent, state: t.state, used: t.used, limit: t.limit.quantity, unit: t.limit.unit });
      }
    }
  }
  return [...bars.values()];
}

export type AuditEntry = {
  id: string;
  localDate: string;
  recordedAt: string;
  quantity: string;
  unit: Unit;
  method: string;
  breach: boolean;
  acknowledgedOver: boolean;
  correctsEntryId: string | null;
  correctionReason: string | null;
  visitId: string | null;
  /** Only in a landowner's view: [longitude, latitude]. */
  position: [number, number] | null;
};

/** The entries behind one audit row: the same selection the tallies sum, oldest first. */
export async function auditEntries(
  db: Executor,
  scope: AuditScope,
  { parcelId, speciesId, foragerId, permitId, asOf }: { parcelId: string; speciesId: string; foragerId: string; permitId: string | null; asOf: string },
): Promise<AuditEntry[] | null> {
  const parcels = (await loadAuditParcels(db, scope)).filter((p) => p.id === parcelId);
  const windows = windowsOf(parcels, asOf).filter((w) => w.allowance.speciesId === speciesId);
  if (windows.length === 0) return null;
  const withPosition = !isClub(scope);
  const rows = await db.execute<{ id: string; local_date: string; recorded_at: string; quantity: string; unit: Unit; method: string; breach: boolean; acknowledged_over: boolean; corrects_entry_id: string | null; correction_reason: string | null; visit_id: string | null; position: { coordinates: [number, number] } | null }>(sql`
    with ${countedEntries(windows, scope)}
    select e.id, c.local_date::text, e.created_at::text as recorded_at, trim_scale(e.quantity)::text as quantity, e.unit, e.method, e.breach, e.acknowledged_over, e.corrects_entry_id, e.correction_reason, c.visit_id,
      ${withPosition ? sql`ST_AsGeoJSON(e.position)::json` : sql`null::json`} as position
    from counted c join harvest_entries e on e.id = c.id
    where c.forager_id = ${foragerId} and c.permit_id is not distinct from ${permitId}::uuid
    order by e.created_at, e.id`);
  return rows.map((r) => ({
    id: r.id,
    localDate: r.local_date,
    recordedAt: new Date(r.recorded_at).toISOString(),
    quantity: r.quantity,
    unit: r.unit,
    method: r.method,
    breach: r.breach,
    acknowledgedOver: r.acknowledged_over,
    correctsEntryId: r.corrects_entry_id,
    correctionReason: r.correction_reason,
    visitId: r.visit_id,
    position: withPosition && r.position ? r.position.coordinates : null,
  }));
}
