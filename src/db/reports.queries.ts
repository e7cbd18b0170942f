import { sql } from 'drizzle-orm';
import { localDateAt, scopeOrder, seasonAsOf, talliesFor } from '../lib/field';
import type { Tally } from '../lib/field/types';
import { reportBasisWords } from '../lib/tally-words';
import { addDecimals, baseUnits, fromBase, measures, units, type Measure, type Unit } from '../lib/units';
import { auditTallies, isClubScope, loadAuditParcels, type AuditScope } from './audit.queries';
import type { Executor } from './client';
import { listFlags, type FlagView } from './flags.queries';

/** How a tally in the report is read (src/lib/tally-words.ts). */
export const reportBasis = reportBasisWords;

export type SeasonReportSpecies = {
  speciesId: string;
  commonName: string;
  scientificName: string;
  season: { start: string; end: string };
  /** Per limit in force, the highest tally in the report's view. */
  tallies: Tally[];
  /** What was taken this season in the report's view, per measure, in the unit of its limits (or its base unit). */
  taken: { measure: Measure; quantity: string; unit: Unit }[];
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
export async function seasonReport(db: Executor, scope: AuditScope & { parcelId: string }, { asOf: asked, now = new Date() }: { asOf?: string; now?: Date }): Promise<SeasonReport | null> {
  const [parcel] = await loadAuditParcels(db, scope);
  if (!parcel) return null;
  // The parcel's own date: "today" on the parcel, never on the UTC calendar.
  const asOf = asked ?? localDateAt(now, parcel.timeZone);
  const [head] = await db.execute<{ owner_name: string; owner_email: string; club_name: string | null }>(sql`
    select coalesce(u.name, u.email) as owner_name, u.email as owner_email,
      ${'clubId' in scope ? sql`(select c.name from clubs c where c.id = ${scope.clubId}::uuid)` : sql`null::text`} as club_name
    from parcels p join users u on u.id = p.owner_id where p.id = ${parcel.id}::uuid`);
  const audit = await auditTallies(db, scope, { asOf });
  const clubPermit = isClubScope(scope) ? (parcel.permits.find((p) => p.holderClubId === scope.clubId && p.state === 'active') ?? parcel.permits.find((p) => p.holderClubId === scope.clubId) ?? null) : null;

  const species: SeasonReportSpecies[] = [];
  for (const allowance of parcel.allowances) {
    const season = seasonAsOf(allowance.seasons, asOf);
    if (!season) continue;
    const rows = audit.rows.filter((r) => r.speciesId === allowance.speciesId);
    const key = (t: Tally) => `${t.scope}|${t.measure}`;
    const highest = new Map<string, Tally>();
    for (const t of rows.flatMap((r) => r.tallies)) {
      const current = highest.get(key(t));
      if (!current || t.percent > current.percent) highest.set(key(t), t);
    }
    // A species nobody took still shows its limits, at nothing used.
    const nothing = talliesFor(allowance, {}, { forager: { id: '', clubIds: clubPermit?.holderClubId ? [clubPermit.holderClubId] : [] }, permit: clubPermit, thresholdPercent: parcel.nearingThresholdPercent });
    // The landowner's view has no one club permit: club-wide caps come from the rows that have them.
    const tallies = scopeOrder.flatMap((scope) =>
      measures.flatMap((measure) => highest.get(`${scope}|${measure}`) ?? nothing.find((t) => t.scope === scope && t.measure === measure) ?? []),
    );
    const taken = measures.flatMap((measure) => {
      const bases = rows.flatMap((r) => r.taken.filter((t) => t.measure === measure).map((t) => t.base));
      if (bases.length === 0) return [];
      const unit = (allowance.limits.find((l) => l.permitId === null && units[l.unit].measure === measure) ?? allowance.limits.find((l) => units[l.unit].measure === measure))?.unit ?? baseUnits[measure];
      return [{ measure, quantity: fromBase(addDecimals(...bases), unit, 6), unit }];
    });
    species.push({
      speciesId: allowance.speciesId,
      commonName: allowance.commonName,
      scientificName: allowance.scientificName,
      season,
      tallies,
      taken,
      foragers: new Set(rows.map((r) => r.foragerId)).size,
      entries: rows.reduce((n, r) => n + r.entries, 0),
    });
  }
  const period = species.length > 0 ? { start: species.map((s) => s.season.start).sort()[0] as string, end: species.map((s) => s.season.end).sort().at(-1) as string } : null;
  const visitFilter = 'clubId' in scope ? sql`and v.permit_id in (select cp.id from permits cp where cp.holder_club_id = ${scope.clubId}::uuid)` : sql``;
  const [visits] = period
    ? await db.execute<{ n: number }>(sql`select count(*)::int as n from visits v where v.parcel_id = ${parcel.id}::uuid and v.local_date between ${period.start}::date and ${period.end}::date ${visitFilter}`)
    : [{ n: 0 }];
  const flags = (await listFlags(db, scope)).filter((f) => !period || (f.entry.countedOn >= period.start && f.entry.countedOn <= period.end));
  return {
    parcel: { id: parcel.id, name: parcel.name, ownerName: head?.owner_name ?? '', ownerEmail: head?.owner_email ?? '', timeZone: parcel.timeZone },
    club: 'clubId' in scope ? { id: scope.clubId, name: head?.club_name ?? '' } : null,
    asOf,
    period,
    species,
    // Over on sync took a limit over too (the entry is a breach in the totals); only how it came about differs.
    breaches: flags.filter((f) => f.kind === 'breach' || f.kind === 'over-on-sync'),
    openFlags: flags.filter((f) => !f.handled).length,
    visits: visits?.n ?? 0,
    foragers: new Set(audit.rows.map((r) => r.foragerId)).size,
  };
}
