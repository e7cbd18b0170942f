import { sql } from 'drizzle-orm';
import { localDateAt, seasonAsOf, talliesFor, worstState } from '../lib/field';
import type { AllowanceFacts, LimitScope, PermitFacts, ScopeUsage, Tally, TallyState, Usage } from '../lib/field/types';
import { measures, type Measure, type Unit } from '../lib/units';
import type { Executor } from './client';
import { uuidArray } from './arrays';

/**
 * Whose view an audit is. A steward sees a club's entries: those made under the club's permits, on
 * the parcels those permits cover, and never exact positions. A landowner sees every entry on their
 * own parcels (or one of them), positions included. Nobody sees a forager's other entries.
 */
export type AuditScope = { clubId: string; parcelId?: string } | { ownerId: string; parcelId?: string };

export const isClubScope = (scope: AuditScope): scope is { clubId: string; parcelId?: string } => 'clubId' in scope;

export type AuditParcel = {
  id: string;
  name: string;
  ownerId: string;
  timeZone: string;
  nearingThresholdPercent: number;
  allowances: AllowanceFacts[];
  permits: (PermitFacts & { holderName: string })[];
};

/**
 * The parcels in view, each with its allowances in force (every limit, the permits' own included)
 * and the permits in view. With `withTotals`, only those with anything in the kept totals: a club's
 * permits or an owner's parcels can run to many thousands, most of them never harvested.
 */
export async function loadAuditParcels(db: Executor, scope: AuditScope, { withTotals = false } = {}): Promise<AuditParcel[]> {
  const harvested = withTotals ? sql`and p.id in (select h.parcel_id from harvested_parcels h)` : sql``;
  const inView = isClubScope(scope)
    ? sql`p.id in (select cp.parcel_id from permits cp where cp.holder_club_id = ${scope.clubId}::uuid and cp.state in ('approved', 'active', 'expired', 'revoked')) ${scope.parcelId ? sql`and p.id = ${scope.parcelId}::uuid` : sql``}`
    : scope.parcelId
      ? sql`p.owner_id = ${scope.ownerId} and p.id = ${scope.parcelId}::uuid`
      : sql`p.owner_id = ${scope.ownerId}`;
  const permitInView = isClubScope(scope) ? sql`pm.holder_club_id = ${scope.clubId}::uuid` : sql`true`;
  const rows = await db.execute<{ id: string; name: string; owner_id: string; time_zone: string; nearing_threshold_percent: number; allowances: AllowanceFacts[]; permits: (PermitFacts & { holderName: string })[] }>(sql`
    select p.id, p.name, p.owner_id, p.time_zone, p.nearing_threshold_percent,
      coalesce((select json_agg(json_build_object('speciesId', s.id, 'commonName', s.common_name, 'scientificName', s.scientific_name,
          'seasons', a.seasons, 'methods', a.methods, 'cautions', s.cautions, 'lookalikes', s.lookalikes,
          'limits', coalesce((select json_agg(json_build_object('scope', l.scope, 'quantity', trim_scale(l.quantity)::text, 'unit', l.unit, 'permitId', l.permit_id)
              order by l.permit_id nulls first, l.scope, l.unit)
            from limits l where l.allowance_id = a.id), '[]'))
          order by s.common_name)
        from allowances a join species s on s.id = a.species_id where a.parcel_id = p.id and a.removed_at is null), '[]') as allowances,
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

/** The season each allowance in view covers: in progress or last ended on `asOf`, or else on each parcel's own local date today. */
export type AuditWindow = { parcel: AuditParcel; allowance: AllowanceFacts; start: string; end: string };

export function windowsOf(parcels: AuditParcel[], { asOf, now }: { asOf?: string; now: Date }): AuditWindow[] {
  return parcels.flatMap((parcel) => {
    const day = asOf ?? localDateAt(now, parcel.timeZone);
    return parcel.allowances.flatMap((allowance) => {
      const season = seasonAsOf(allowance.seasons, day);
      return season ? [{ parcel, allowance, start: season.start, end: season.end }] : [];
    });
  });
}

/** The date an audit is "as of" when none is asked for: today on the parcels in view, when they share one (else null: today on each). */
export function auditDay(parcels: { timeZone: string }[], now: Date): string | null {
  const days = new Set(parcels.map((p) => localDateAt(now, p.timeZone)));
  return days.size === 1 ? ([...days][0] as string) : null;
}

/** The windows as a table: (parcel_id, species_id, season_start, season_end). */
function windowsTable(windows: AuditWindow[]) {
  return sql`
    select * from unnest(${uuidArray(windows.map((w) => w.parcel.id))}, ${uuidArray(windows.map((w) => w.allowance.speciesId))},
      ${`{${windows.map((w) => w.start).join(',')}}`}::date[], ${`{${windows.map((w) => w.end).join(',')}}`}::date[]) as w(parcel_id, species_id, season_start, season_end)`;
}

type SumRow = {
  parcel_id: string;
  species_id: string;
  measure: Measure;
  forager_id: string;
  forager_name: string;
  season: string;
  day: string;
  visit: string | null;
  season_seen: string;
  day_seen: string;
  visit_seen: string | null;
  entries: number;
  breaches: number;
  permits: string[];
  parcel_total: string;
  clubs: Record<string, string> | null;
};

/**
 * Per window and measure, each forager's kept totals of the season (harvest_totals): the season's
 * sum, the busiest day and visit (each row carries its day's and its visit's whole total), entries
 * and breaches; with the parcel's and each club's season totals. A forager's per-forager limits
 * count everything they took on the parcel under any permit; in a club's view only the club's share
 * is shown (`*_seen`), and only members with entries under it.
 *
 * The kept totals are read once and grouped at once by forager and permit (`g`: a few rows per
 * forager, whatever the number of days and visits); every later sum works on those groups. A permit
 * belongs to one holder, so its club is constant within a group, and so is whether the club's view
 * sees it.
 */
export function auditSumsQuery(windows: AuditWindow[], scope: AuditScope) {
  const club = isClubScope(scope);
  const seen = club ? sql`club_id is not distinct from ${scope.clubId}::uuid` : sql`true`;
  return sql`
    with w as (${windowsTable(windows)}),
    -- The kept totals of the parcels in view, grouped by season, forager and permit first: a few rows
    -- per forager whatever the number of days and visits. PostgreSQL sizes this grouping by the
    -- extended statistics of migration 0014 and groups in a hash table; only then are the groups
    -- matched to the windows (one per parcel and species), whose row count it cannot foresee.
    k as (
      select parcel_id, species_id, measure, season_start, season_end, forager_id, permit_id, club_id,
        sum(total) as total, max(day_total) as day, max(permit_day_total) as permit_day, max(visit_total) as visit,
        max(total) filter (where visit_id is not null) as busiest_visit_row, bool_or(visit_id is not null) as has_visit,
        sum(entries) as entries, sum(breaches) as breaches
      from harvest_totals where parcel_id = any(${uuidArray([...new Set(windows.map((w) => w.parcel.id))])})
      group by 1, 2, 3, 4, 5, 6, 7, 8),
    g as (
      select k.parcel_id, k.species_id, k.measure, k.forager_id, k.permit_id, k.club_id,
        sum(k.total) as total, max(k.day) as day, max(k.permit_day) as permit_day, max(k.visit) as visit,
        max(k.busiest_visit_row) as busiest_visit_row, bool_or(k.has_visit) as has_visit,
        sum(k.entries) as entries, sum(k.breaches) as breaches
      from w join k on k.parcel_id = w.parcel_id and k.species_id = w.species_id
        and k.season_start <= w.season_end and k.season_end >= w.season_start
      group by 1, 2, 3, 4, 5, 6),
    s as (select g.*, ${seen} as seen from g),
    member as (
      select parcel_id, species_id, measure, forager_id,
        sum(total) as season, max(day) as day, max(visit) as visit,
        sum(total) filter (where seen) as season_seen,
        max(${club ? sql`permit_day` : sql`day`}) filter (where seen) as day_seen,
        max(${club ? sql`busiest_visit_row` : sql`visit`}) filter (where seen and has_visit) as visit_seen,
        coalesce(sum(entries) filter (where seen), 0)::int as entries, coalesce(sum(breaches) filter (where seen), 0)::int as breaches,
        coalesce(array_agg(distinct permit_id) filter (where seen and permit_id is not null), '{}') as permits
      from s group by 1, 2, 3, 4),
    parcel as (select parcel_id, species_id, measure, sum(total) as total from g group by 1, 2, 3),
    clubs as (
      select parcel_id, species_id, measure, json_object_agg(club_id, total) as clubs
      from (select parcel_id, species_id, measure, club_id, trim_scale(sum(total))::text as total from g where club_id is not null group by 1, 2, 3, 4) c
      group by 1, 2, 3)
    select m.parcel_id, m.species_id, m.measure, m.forager_id, coalesce(u.name, u.email) as forager_name,
      trim_scale(m.season)::text as season, trim_scale(m.day)::text as day, trim_scale(m.visit)::text as visit,
      coalesce(trim_scale(m.season_seen), 0)::text as season_seen, coalesce(trim_scale(m.day_seen), 0)::text as day_seen, trim_scale(m.visit_seen)::text as visit_seen,
      m.entries, m.breaches, m.permits, trim_scale(p.total)::text as parcel_total, c.clubs
    from member m
    join users u on u.id = m.forager_id
    join parcel p on p.parcel_id = m.parcel_id and p.species_id = m.species_id and p.measure = m.measure
    left join clubs c on c.parcel_id = m.parcel_id and c.species_id = m.species_id and c.measure = m.measure
    where m.season_seen is not null`;
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
  /** The permit whose limits the tallies are read against (a personal one first, as in the field). */
  permitId: string | null;
  /** Every permit in view the forager's entries counted under, and their holders. */
  permitIds: string[];
  holderName: string;
  /**
   * Visit and day tallies hold the busiest visit and the busiest day; season tallies the sum. In a
   * club's view a per-forager tally's state counts everything the member took on the parcel, but
   * its amount only what they took under the club's permits.
   */
  tallies: Tally[];
  state: TallyState | null;
  entries: number;
  breaches: number;
  /** What this forager took of the species this season (the share in view), per measure, in base units. */
  taken: { measure: Measure; base: string }[];
};

export type AuditChartBar = { parcelId: string; parcelName: string; speciesId: string; commonName: string; scope: LimitScope; measure: Measure; percent: number; state: TallyState; used: string; limit: string; unit: Unit };

export type Audit = { asOf: string | null; rows: AuditRow[]; chart: AuditChartBar[] };

/** The permit a row's limits are read against: a personal permit of the forager before a club's, as checkPermit chooses in the field. */
function permitOfRow(parcel: AuditParcel, foragerId: string, permitIds: string[]) {
  const held = parcel.permits.filter((p) => permitIds.includes(p.id));
  return held.find((p) => p.holderUserId === foragerId) ?? held[0] ?? null;
}

/**
 * Tallies by parcel × species × forager against every limit in force, for the season in progress
 * or last ended on `asOf` (a parcel-local date; by default today on each parcel), by parcel,
 * species and forager name. The kept totals are summed in SQL; the field engine's `talliesFor`
 * turns the sums into tallies, so the audit and the field screen agree by construction.
 */
export async function auditTallies(db: Executor, scope: AuditScope, { asOf, now = new Date() }: { asOf?: string; now?: Date }): Promise<Audit> {
  const parcels = await loadAuditParcels(db, scope, { withTotals: true });
  const day = asOf ?? auditDay(parcels, now);
  const windows = windowsOf(parcels, { asOf, now });
  if (windows.length === 0) return { asOf: day, rows: [], chart: [] };
  // One statement: PostgreSQL reads the totals with parallel workers and groups them in a hash table
  // (the extended statistics of migration 0014 tell it how few groups there are).
  const sums = (await db.execute<SumRow>(auditSumsQuery(windows, scope))) as unknown as SumRow[];

  const windowOf = new Map(windows.map((w) => [`${w.parcel.id}|${w.allowance.speciesId}`, w]));
  const byForager = new Map<string, SumRow[]>();
  for (const s of sums) {
    const key = `${s.parcel_id}|${s.species_id}|${s.forager_id}`;
    byForager.set(key, [...(byForager.get(key) ?? []), s]);
  }
  const rows: AuditRow[] = [];
  for (const group of byForager.values()) {
    const first = group[0] as SumRow;
    const w = windowOf.get(`${first.parcel_id}|${first.species_id}`);
    if (!w) continue;
    const permitIds = [...new Set(group.flatMap((s) => s.permits))];
    const permit = permitOfRow(w.parcel, first.forager_id, permitIds);
    const usage: Usage = { [first.species_id]: {} };
    const shown: Usage = { [first.species_id]: {} };
    for (const s of group) {
      const clubs = s.clubs ?? {};
      const whole: ScopeUsage = { visit: s.visit ?? '0', day: s.day, season: s.season, 'parcel-season': s.parcel_total, 'club-season': clubs };
      (usage[first.species_id] as Partial<Record<Measure, ScopeUsage>>)[s.measure] = whole;
      (shown[first.species_id] as Partial<Record<Measure, ScopeUsage>>)[s.measure] = { ...whole, visit: s.visit_seen ?? '0', day: s.day_seen, season: s.season_seen };
    }
    const forager = { id: first.forager_id, clubIds: permit?.holderClubId ? [permit.holderClubId] : [] };
    const tallies = talliesFor(w.allowance, usage, { forager, permit, thresholdPercent: w.parcel.nearingThresholdPercent }, shown);
    // Every measure of one entry is recorded together, so any measure counts the entries; the first in order is taken.
    const counted = [...group].sort((x, y) => measures.indexOf(x.measure) - measures.indexOf(y.measure))[0] as SumRow;
    rows.push({
      parcelId: w.parcel.id,
      parcelName: w.parcel.name,
      speciesId: w.allowance.speciesId,
      commonName: w.allowance.commonName,
      scientificName: w.allowance.scientificName,
      season: { start: w.start, end: w.end },
      foragerId: first.forager_id,
      foragerName: first.forager_name,
      permitId: permit?.id ?? null,
      permitIds,
      holderName: w.parcel.permits.filter((p) => permitIds.includes(p.id)).map((p) => p.holderName).join(', ') || 'no permit',
      tallies,
      state: worstState(tallies.map((t) => t.state)),
      entries: counted.entries,
      breaches: counted.breaches,
      taken: measures.flatMap((m) => group.filter((s) => s.measure === m).map((s) => ({ measure: m, base: s.season_seen }))),
    });
  }
  // By code point, as the database's C collation orders text.
  const keyOf = (r: AuditRow) => [r.parcelName, r.parcelId, r.commonName, r.speciesId, r.foragerName, r.foragerId].join('\u0000');
  const sorted = rows.map((row) => ({ row, key: keyOf(row) })).sort((a, b) => (a.key < b.key ? -1 : a.key > b.key ? 1 : 0)).map((k) => k.row);
  return { asOf: day, rows: sorted, chart: chartBars(sorted) };
}

/** Per parcel, species, scope and measure: the highest tally among the rows (a shared cap is the same in each). */
function chartBars(rows: AuditRow[]): AuditChartBar[] {
  const bars = new Map<string, AuditChartBar>();
  for (const row of rows) {
    for (const t of row.tallies) {
      const key = `${row.parcelId}|${row.speciesId}|${t.scope}|${t.measure}`;
      const current = bars.get(key);
      if (!current || t.percent > current.percent) {
        bars.set(key, { parcelId: row.parcelId, parcelName: row.parcelName, speciesId: row.speciesId, commonName: row.commonName, scope: t.scope, measure: t.measure, percent: t.percent, state: t.state, used: t.used, limit: t.limit.quantity, unit: t.limit.unit });
      }
    }
  }
  return [...bars.values()];
}

export type AuditEntry = {
  id: string;
  /** The parcel-local day it counts on (a correction: its chain's first day). */
  countedOn: string;
  /** The parcel-local day it was recorded. */
  localDate: string;
  recordedAt: string;
  quantities: { measure: Measure; quantity: string; unit: Unit }[];
  method: string;
  breach: boolean;
  acknowledgedOver: boolean;
  correctsEntryId: string | null;
  correctionReason: string | null;
  visitId: string | null;
  /** Only in a landowner's view: [longitude, latitude]. */
  position: [number, number] | null;
  /**
   * The entry's photo, when the forager who recorded it uploaded it (findPhotoForViewer's rule), and
   * whether it is the viewer's own: `/api/photos/{uploadId}` gives its owner the original and anyone
   * else who sees the entry the copy without metadata.
   */
  photo: { uploadId: string; yours: boolean } | null;
};

/** The entries behind one audit row: the same stored facts the tallies sum (in a club's view, its share), oldest first. */
export async function auditEntries(
  db: Executor,
  scope: AuditScope,
  { parcelId, speciesId, foragerId, asOf, now = new Date(), viewerId }: { parcelId: string; speciesId: string; foragerId: string; asOf?: string; now?: Date; viewerId?: string },
): Promise<AuditEntry[] | null> {
  const parcels = (await loadAuditParcels(db, scope)).filter((p) => p.id === parcelId);
  const [window] = windowsOf(parcels, { asOf, now }).filter((w) => w.allowance.speciesId === speciesId);
  if (!window) return null;
  const withPosition = !isClubScope(scope);
  const inView = isClubScope(scope) ? sql`and e.club_id = ${scope.clubId}::uuid` : sql``;
  const viewer = viewerId ?? (isClubScope(scope) ? null : scope.ownerId);
  const rows = await db.execute<{ id: string; counted_on: string; local_date: string; recorded_at: string; quantities: AuditEntry['quantities']; method: string; breach: boolean; acknowledged_over: boolean; corrects_entry_id: string | null; correction_reason: string | null; visit_id: string | null; position: { coordinates: [number, number] } | null; photo_id: string | null; photo_yours: boolean | null }>(sql`
    select e.id, e.counted_on::text, e.local_date::text, e.created_at::text as recorded_at, e.method, e.breach, e.acknowledged_over, e.corrects_entry_id, e.correction_reason,
      e.counted_visit_id as visit_id, ${withPosition ? sql`ST_AsGeoJSON(e.position)::json` : sql`null::json`} as position,
      (select json_agg(json_build_object('measure', q.measure, 'quantity', trim_scale(q.quantity)::text, 'unit', q.unit) order by q.measure) from harvest_quantities q where q.entry_id = e.id) as quantities,
      u.id as photo_id, u.owner_id = ${viewer} as photo_yours
    from harvest_entries e
    left join uploads u on u.id = e.photo_upload_id and u.owner_id = e.forager_id and u.purpose = 'harvest-photo'
    where e.parcel_id = ${parcelId}::uuid and e.species_id = ${speciesId}::uuid and e.forager_id = ${foragerId}
      and e.season_start <= ${window.end}::date and e.season_end >= ${window.start}::date ${inView}
    order by e.created_at, e.id`);
  return rows.map((r) => ({
    id: r.id,
    countedOn: r.counted_on,
    localDate: r.local_date,
    recordedAt: new Date(r.recorded_at).toISOString(),
    quantities: r.quantities,
    method: r.method,
    breach: r.breach,
    acknowledgedOver: r.acknowledged_over,
    correctsEntryId: r.corrects_entry_id,
    correctionReason: r.correction_reason,
    visitId: r.visit_id,
    position: withPosition && r.position ? r.position.coordinates : null,
    photo: r.photo_id ? { uploadId: r.photo_id, yours: r.photo_yours === true } : null,
  }));
}
