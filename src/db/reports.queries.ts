import { sql } from 'drizzle-orm';
import { scopeOrder, seasonAsOf, talliesFor } from '../lib/field';
import type { LimitScope, Tally } from '../lib/field/types';
import { addDecimals, fromBase, type Unit } from '../lib/units';
import { auditTallies, loadAuditParcels, type AuditScope } from './audit.queries';
import type { Executor } from './client';
import { listFlags, type FlagView } from './flags.queries';

/** How a tally in the report is read: the busiest visit or day, the highest forager, everyone on the parcel, the club. */
export const reportBasis: Record<LimitScope, string> = {
  visit: 'busiest visit',
  day: 'busiest day',
  season: 'highest forager',
  'parcel-season': 'everyone on the parcel',
  'club-season': 'the club',
};

export type SeasonReportSpecies = {
  speciesId: string;
  commonName: string;
  scientificName: string;
  season: { start: string; end: string };
  /** Per limit in force, the highest tally in the report's view. */
  tallies: Tally[];
  taken: { quantity: string; unit: Unit } | null;
  foragers: number;
  entries: number;
};

export type SeasonReport = {
  parcel: { id: string; name: string; ownerName: string; ownerEmail: string; timeZone: string };
  club: { id: string; name: string } | null;
  asOf: string;
  period: { start: string; end: string } | null;
  species: SeasonReportSpecies[];
  breaches: FlagView[];
  openFlags: number;
  visits: number;
  foragers: number;
};

/**
 * The season report of one parcel on `asOf`: totals against limits per species, the breaches with
 * their follow-up, and the number of visits. A landowner's covers every holder; a club's only the
 * entries and visits under the club's permits. Null when the parcel is not in view.
 */
export async function seasonReport(db: Executor, scope: AuditScope & { parcelId: string }, { asOf }: { asOf: string }): Promise<SeasonReport | null> {
  const [parcel] = await loadAuditParcels(db, scope);
  if (!parcel) return null;
  const [head] = await db.execute<{ owner_name: string; owner_email: string; club_name: string | null }>(sql`
    select coalesce(u.name, u.email) as owner_name, u.email as owner_email,
      ${'clubId' in scope ? sql`(select c.name from clubs c where c.id = ${scope.clubId}::uuid)` : sql`null::text`} as club_name
    from parcels p join users u on u.id = p.owner_id where p.id = ${parcel.id}::uuid`);
  const audit = await auditTallies(db, scope, { asOf });
  const clubPermit = 'clubId' in scope ? (parcel.permits.find((p) => p.holderClubId === scope.clubId && p.state === 'active') ?? parcel.permits.find((p) => p.holderClubId === scope.clubId) ?? null) : null;

  const species: SeasonReportSpecies[] = [];
  for (const allowance of parcel.allowances) {
    const season = seasonAsOf(allowance.seasons, asOf);
    if (!season) continue;
    const rows = audit.rows.filter((r) => r.speciesId === allowance.speciesId);
    const highest = new Map<LimitScope, Tally>();
    for (const t of rows.flatMap((r) => r.tallies)) {
      const current = highest.get(t.scope);
      if (!current || t.percent > current.percent) highest.set(t.scope, t);
    }
    // A species nobody took still shows its limits, at nothing used.
    const nothing = talliesFor(allowance, {}, { forager: { id: '', clubIds: clubPermit?.holderClubId ? [clubPermit.holderClubId] : [] }, permit: clubPermit, thresholdPercent: parcel.nearingThresholdPercent });
    // The landowner's view has no one club permit: club-wide caps come from the rows that have them.
    const tallies = scopeOrder.flatMap((scope) => highest.get(scope) ?? nothing.find((t) => t.scope === scope) ?? []);
    const unit = (allowance.limits.find((l) => l.permitId === null) ?? allowance.limits[0])?.unit ?? null;
    const takenBase = rows.length > 0 ? addDecimals(...rows.map((r) => r.seasonTotalBase)) : '0';
    species.push({
      speciesId: allowance.speciesId,
      commonName: allowance.commonName,
      scientificName: allowance.scientificName,
      season,
      tallies,
      taken: unit ? { quantity: fromBase(takenBase, unit, 6), unit } : null,
      foragers: new Set(rows.map((r) => r.foragerId)).size,
      entries: rows.reduce((n, r) => n + r.entries, 0),
    });
  }
  const period = species.length > 0 ? { start: species.map((s) => s.season.start).sort()[0] as string, end: species.map((s) => s.season.end).sort().at(-1) as string } : null;
  const visitFilter = 'clubId' in scope ? sql`and v.permit_id in (select cp.id from permits cp where cp.holder_club_id = ${scope.clubId}::uuid)` : sql``;
  const [visits] = period
    ? await db.execute<{ n: number }>(sql`select count(*)::int as n from visits v where v.parcel_id = ${parcel.id}::uuid and v.local_date between ${period.start}::date and ${period.end}::date ${visitFilter}`)
    : [{ n: 0 }];
  const flags = (await listFlags(db, scope)).filter((f) => !period || (f.entry.localDate >= period.start && f.entry.localDate <= period.end));
  return {
    parcel: { id: parcel.id, name: parcel.name, ownerName: head?.owner_name ?? '', ownerEmail: head?.owner_email ?? '', timeZone: parcel.timeZone },
    club: 'clubId' in scope ? { id: scope.clubId, name: head?.club_name ?? '' } : null,
    asOf,
    period,
    species,
    breaches: flags.filter((f) => f.kind === 'breach'),
    openFlags: flags.filter((f) => !f.handled).length,
    visits: visits?.n ?? 0,
    foragers: new Set(audit.rows.map((r) => r.foragerId)).size,
  };
}
