import {
  addDecimals, baseUnits, compareDecimals, fromBase, measureOf, measures, multiplyDecimals, percentOf, subtractDecimals, toBase, units, UnitMismatch, type Measure,
} from '../units';
import { AppError } from '../errors';
import type { AllowanceFacts, EntryQuantity, Forager, LimitFacts, LimitScope, PermitFacts, ScopeUsage, Tally, TallyState, Usage } from './types';

/**
 * Running totals against limits (DESIGN.md, "Limits" and "Running totals"). Every comparison is
 * made exactly in the base unit of the measure (g, mL, or items); see units.ts for why nothing drifts.
 */

export type TallyContext = {
  forager: Forager;
  /** The permit in force for this forager on this parcel; null shows the parcel's own limits only. */
  permit: PermitFacts | null;
  /** The parcel's nearing threshold, in percent (default 80). */
  thresholdPercent: number;
};

export const scopeOrder: LimitScope[] = ['visit', 'day', 'season', 'parcel-season', 'club-season'];

function thresholdDecimal(thresholdPercent: number): string {
  if (!(Number.isFinite(thresholdPercent) && thresholdPercent > 0 && thresholdPercent <= 100)) {
    throw new RangeError(`a nearing threshold is a percentage above 0 and at most 100 (got ${thresholdPercent})`);
  }
  const text = String(thresholdPercent);
  return text.includes('e') ? thresholdPercent.toFixed(12) : text;
}

/**
 * The state of one tally: within below the threshold, nearing from it (at or past), reached at
 * exactly 100 %, over past it. Compared exactly: used × 100 against limit × threshold.
 */
export function tallyState(usedBase: string, limitBase: string, thresholdPercent: number): TallyState {
  const vsLimit = compareDecimals(usedBase, limitBase);
  if (vsLimit > 0) return 'over';
  if (vsLimit === 0) return 'reached';
  const nearing = compareDecimals(multiplyDecimals(usedBase, '100'), multiplyDecimals(limitBase, thresholdDecimal(thresholdPercent))) >= 0;
  return nearing ? 'nearing' : 'within';
}

const stateRank: Record<TallyState, number> = { within: 0, nearing: 1, reached: 2, over: 3 };
/** The worst of several tally states (over > reached > nearing > within), or null for none. */
export function worstState(states: TallyState[]): TallyState | null {
  return states.reduce<TallyState | null>((worst, s) => (worst === null || stateRank[s] > stateRank[worst] ? s : worst), null);
}

type AppliedLimit = LimitFacts & { measure: Measure; fromPermit: boolean; base: string };

/** Whether a club-wide cap can apply: only under a club permit of a club the forager belongs to. */
function isClubPermitOf(permit: PermitFacts | null, forager: Forager): boolean {
  return !!permit?.holderClubId && forager.clubIds.includes(permit.holderClubId);
}

/**
 * The limit that governs each scope and measure. The parcel's own limit, unless the permit in force
 * sets a tighter one for the same scope and measure (a permit may tighten, never loosen: a looser or
 * equal permit limit is ignored; one for a scope the parcel leaves open applies). Club-wide caps only
 * under a club permit. In scope order, then measure order.
 */
export function limitsInForce(allowance: AllowanceFacts, { forager, permit }: Pick<TallyContext, 'forager' | 'permit'>): AppliedLimit[] {
  const clubPermit = isClubPermitOf(permit, forager);
  const chosen = new Map<string, AppliedLimit>();
  const candidates = allowance.limits.filter((l) => l.permitId === null || (permit !== null && l.permitId === permit.id));
  // Parcel limits first, so a permit limit must be strictly tighter to replace one.
  candidates.sort((x, y) => Number(x.permitId !== null) - Number(y.permitId !== null));
  for (const limit of candidates) {
    if (limit.scope === 'club-season' && !clubPermit) continue;
    const applied = { ...limit, measure: measureOf(limit.unit), fromPermit: limit.permitId !== null, base: toBase(limit.quantity, limit.unit) };
    const key = `${limit.scope}|${applied.measure}`;
    const current = chosen.get(key);
    if (!current || compareDecimals(applied.base, current.base) < 0) chosen.set(key, applied);
  }
  return scopeOrder.flatMap((scope) => measures.flatMap((measure) => chosen.get(`${scope}|${measure}`) ?? []));
}

/** The measures an allowance's limits count, in measure order: every entry of it gives a quantity in each. */
export function measuresLimited(allowance: AllowanceFacts, context: Pick<TallyContext, 'forager' | 'permit'>): Measure[] {
  const limited = new Set(limitsInForce(allowance, context).map((l) => l.measure));
  return measures.filter((m) => limited.has(m));
}

/** What one limit's scope has used, from the usage of its species and measure. */
function usedIn(usage: ScopeUsage | undefined, limit: AppliedLimit, permit: PermitFacts | null): string {
  if (!usage) return '0';
  if (limit.scope === 'club-season') return (permit?.holderClubId ? usage['club-season']?.[permit.holderClubId] : undefined) ?? '0';
  return usage[limit.scope] ?? '0';
}

/**
 * One tally. `stateBase` decides the state; `shownBase` is the amount shown (in a club's audit a
 * member's per-forager limits are judged on everything they took, but show only the club's share).
 */
function tallyOf(limit: AppliedLimit, stateBase: string, shownBase: string, thresholdPercent: number): Tally {
  const remainingBase = subtractDecimals(limit.base, shownBase);
  return {
    scope: limit.scope,
    measure: limit.measure,
    limit: { quantity: limit.quantity, unit: limit.unit, fromPermit: limit.fromPermit },
    used: fromBase(shownBase, limit.unit, 6),
    remaining: compareDecimals(remainingBase, '0') > 0 ? fromBase(remainingBase, limit.unit, 6) : '0',
    percent: percentOf(shownBase, limit.base),
    state: tallyState(stateBase, limit.base, thresholdPercent),
  };
}

/**
 * One tally per limit in force for this species, in scope order (visit, day, season, parcel-season,
 * club-season), then measure order. With `shown`, the amounts come from it and the states from `usage`.
 */
export function talliesFor(allowance: AllowanceFacts, usage: Usage, context: TallyContext, shown: Usage = usage): Tally[] {
  return limitsInForce(allowance, context).map((limit) => {
    const whole = usedIn(usage[allowance.speciesId]?.[limit.measure], limit, context.permit);
    const seen = shown === usage ? whole : usedIn(shown[allowance.speciesId]?.[limit.measure], limit, context.permit);
    return tallyOf(limit, whole, seen, context.thresholdPercent);
  });
}

export type Projection = {
  /** The tallies as they would stand with the entry saved. */
  tallies: Tally[];
  /** True when any tally would go over: the entry needs an explicit acknowledgement and is a breach. */
  wouldBreach: boolean;
  /** The scopes that would go over (in any measure). */
  breaches: LimitScope[];
  /** The entry's quantities in the base unit of each measure, as the ledger stores them. */
  bases: Partial<Record<Measure, string>>;
};

/** An entry that leaves out a measure its allowance limits ("200 g or 50 plants" needs both). */
export class MissingQuantity extends AppError {
  constructor(allowance: AllowanceFacts, missing: Measure[]) {
    const words = missing.map((m) => (m === 'mass' ? 'its weight' : m === 'volume' ? 'its volume' : `the number of ${units[baseUnits[m]].label}`));
    super(400, 'quantity-missing', `The limits for ${allowance.commonName} here count ${words.join(' and ')} too: give ${missing.length > 1 ? 'each' : 'it'} as well.`, 'quantities');
    this.name = 'MissingQuantity';
  }
}

/**
 * The entry's quantities by measure, checked against the limits in force: one quantity per measure
 * at most; every measure the limits count must be given; a unit of a measure they do not count is
 * refused (UnitMismatch names the limit's unit). With no limits, any measures are taken as they are.
 * A correction (`partial`) adjusts only the measures it names.
 */
export function entryBases(
  allowance: AllowanceFacts, quantities: EntryQuantity[], context: Pick<TallyContext, 'forager' | 'permit'>, { partial = false }: { partial?: boolean } = {},
): Partial<Record<Measure, string>> {
  const limits = limitsInForce(allowance, context);
  const bases: Partial<Record<Measure, string>> = {};
  for (const q of quantities) {
    if (!(q.unit in units)) throw new RangeError(`unknown unit: ${q.unit}`);
    const measure = measureOf(q.unit);
    if (limits.length > 0 && !limits.some((l) => l.measure === measure)) {
      // Name a measure the entry has not given yet (the plants, when the grams are there), else the first.
      const given = new Set(quantities.filter((o) => o.unit in units).map((o) => measureOf(o.unit)));
      const counted = limits.find((l) => !given.has(l.measure)) ?? (limits[0] as AppliedLimit);
      throw new UnitMismatch(q.unit, counted.unit);
    }
    if (bases[measure] !== undefined) throw new AppError(400, 'quantity-twice', `Give the ${measure === 'mass' || measure === 'volume' ? measure : units[q.unit].label} once.`, 'quantities');
    bases[measure] = toBase(q.quantity, q.unit);
  }
  const missing = partial ? [] : measuresLimited(allowance, context).filter((m) => bases[m] === undefined);
  if (missing.length > 0) throw new MissingQuantity(allowance, missing);
  return bases;
}

/**
 * The tallies as they would be after a proposed entry, which counts towards every scope of each of
 * its measures at once. Quantities are checked by `entryBases` first (which throws on a mismatch).
 */
export function projectEntry(allowance: AllowanceFacts, usage: Usage, quantities: EntryQuantity[], context: TallyContext, options: { partial?: boolean } = {}): Projection {
  const bases = entryBases(allowance, quantities, context, options);
  const after: Usage = { [allowance.speciesId]: {} };
  for (const measure of measures) {
    const had = usage[allowance.speciesId]?.[measure] ?? {};
    const add = bases[measure];
    if (add === undefined) {
      if (usage[allowance.speciesId]?.[measure]) (after[allowance.speciesId] as Partial<Record<Measure, ScopeUsage>>)[measure] = had;
      continue;
    }
    const plus = (v: string | undefined) => addDecimals(v ?? '0', add);
    const clubs = { ...had['club-season'] };
    if (context.permit?.holderClubId) clubs[context.permit.holderClubId] = plus(clubs[context.permit.holderClubId]);
    (after[allowance.speciesId] as Partial<Record<Measure, ScopeUsage>>)[measure] = {
      visit: plus(had.visit), day: plus(had.day), season: plus(had.season), 'parcel-season': plus(had['parcel-season']), 'club-season': clubs,
    };
  }
  const tallies = talliesFor(allowance, after, context);
  const adding = new Set(measures.filter((m) => bases[m] !== undefined && compareDecimals(bases[m] as string, '0') > 0));
  // Only a measure the entry adds to can be taken over by it; taking away never breaches.
  const breaches = [...new Set(tallies.filter((t) => t.state === 'over' && adding.has(t.measure)).map((t) => t.scope))];
  return { tallies, wouldBreach: breaches.length > 0, breaches, bases };
}
