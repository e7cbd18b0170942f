import { measureOf, measures, type Measure } from '../units';
import { currentSeason } from './time';
import type { AllowanceFacts, LimitScope, ParcelFacts, PermitFacts, Tally, TallyState } from './types';

/**
 * The one counting rule. When an entry is written, everything its counting needs is decided here
 * and stored on it: the parcel-local day it counts on, the visit, the permit (and the club holding
 * it), and the season occurrence of its allowance. A correction counts where the root of its chain
 * counted, so it copies the root's facts. Every reader (the field, the preview, My ledger, both
 * audits, the season report and the CSVs) then only adds up stored facts.
 */
export type CountingFacts = {
  countedOn: string;
  countedVisitId: string | null;
  permitId: string | null;
  clubId: string | null;
  seasonStart: string;
  seasonEnd: string;
};

/** The facts of a new entry recorded in a visit on a local date; null when its species is out of season then. */
export function countingFactsFor({ allowance, permit, visitId, localDate }: { allowance: AllowanceFacts; permit: Pick<PermitFacts, 'id' | 'holderClubId'> | null; visitId: string | null; localDate: string }): CountingFacts | null {
  const season = currentSeason(allowance.seasons, localDate);
  if (!season) return null;
  return {
    countedOn: localDate,
    countedVisitId: visitId,
    permitId: permit?.id ?? null,
    clubId: permit?.holderClubId ?? null,
    seasonStart: season.start,
    seasonEnd: season.end,
  };
}

/** The measures any limit of an allowance counts (the parcel's own and every permit's), in measure order. */
export function measuresOf(allowance: AllowanceFacts): Measure[] {
  const counted = new Set(allowance.limits.map((l) => measureOf(l.unit)));
  return measures.filter((m) => counted.has(m));
}

/**
 * What to sum for one species and measure: the season occurrence to count in, the day and the visit
 * (`'open'`: the forager's open visit on the parcel that day, if any; null: no visit).
 */
export type UsageWindow = {
  parcelId: string;
  speciesId: string;
  measure: Measure;
  seasonStart: string;
  seasonEnd: string;
  day: string;
  visit: string | 'open' | null;
};

/** The windows a check-in or an entry on a parcel sums: each in-season allowance, in each measure its limits count. */
export function usageWindows(parcel: Pick<ParcelFacts, 'id' | 'allowances'>, localDate: string, visit: string | 'open' | null): UsageWindow[] {
  return parcel.allowances.flatMap((allowance) => {
    const season = currentSeason(allowance.seasons, localDate);
    if (!season) return [];
    return measuresOf(allowance).map((measure) => ({
      parcelId: parcel.id, speciesId: allowance.speciesId, measure, seasonStart: season.start, seasonEnd: season.end, day: localDate, visit,
    }));
  });
}

const stateRank: Record<TallyState, number> = { within: 0, nearing: 1, reached: 2, over: 3 };

export type FlagDecision = { kind: 'breach' | 'nearing'; scopes: LimitScope[]; worstState: TallyState };

/**
 * Whether an entry raises a flag: a breach always does; otherwise an entry that moves a tally up
 * into nearing or reached. Entries that keep a tally where it already stood raise none, so a
 * steward sees each crossing once.
 */
export function flagFor(before: Tally[], after: Tally[], breach: boolean): FlagDecision | null {
  const key = (t: Tally) => `${t.scope}|${t.measure}`;
  const raised = after.filter((t) => {
    const was = before.find((b) => key(b) === key(t))?.state ?? 'within';
    return stateRank[t.state] > stateRank[was] && t.state !== 'within';
  });
  if (!breach && raised.length === 0) return null;
  const flagged = breach ? after.filter((t) => t.state === 'over' || raised.includes(t)) : raised;
  const scopes = [...new Set(flagged.map((t) => t.scope))];
  const worstState = after.map((t) => t.state).reduce<TallyState>((worst, s) => (stateRank[s] > stateRank[worst] ? s : worst), 'within');
  return { kind: breach ? 'breach' : 'nearing', scopes, worstState };
}
