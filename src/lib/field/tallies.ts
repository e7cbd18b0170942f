import {
  addDecimals, compareDecimals, divideDecimals, fromBase, multiplyDecimals, sameDimension, subtractDecimals, toBase, units, UnitMismatch, type Unit,
} from '../units';
import type { AllowanceFacts, Forager, LimitFacts, LimitScope, PermitFacts, Tally, TallyState, Usage } from './types';

/**
 * Running totals against limits (DESIGN.md, "Limits" and "Running totals"). Every comparison is
 * made exactly in the base unit of the dimension (g, mL or count); see units.ts for why nothing drifts.
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

type AppliedLimit = LimitFacts & { fromPermit: boolean; base: string };

/** Whether a club-wide cap can apply: only under a club permit of a club the forager belongs to. */
function isClubPermitOf(permit: PermitFacts | null, forager: Forager): boolean {
  return !!permit?.holderClubId && forager.clubIds.includes(permit.holderClubId);
}

/**
 * The limit that governs each scope. The parcel's own limit, unless the permit in force sets a
 * tighter one for the same scope (a permit may tighten, never loosen: a looser or equal permit limit
 * is ignored; one for a scope the parcel leaves open applies). Club-wide caps only under a club
 * permit. A permit limit in another dimension than the parcel's cannot be compared and is ignored
 * (the permit form refuses it).
 */
export function limitsInForce(allowance: AllowanceFacts, { forager, permit }: Pick<TallyContext, 'forager' | 'permit'>): AppliedLimit[] {
  const clubPermit = isClubPermitOf(permit, forager);
  const key = `${permit?.id ?? ''}|${clubPermit}`;
  let known = chosenLimits.get(allowance.limits);
  if (!known) chosenLimits.set(allowance.limits, (known = new Map()));
  const cached = known.get(key);
  if (cached) return cached;
  const chosen = chooseLimits(allowance, permit, clubPermit);
  known.set(key, chosen);
  return chosen;
}

/** The limits chosen from one allowance's limits (loaded facts, never changed) per permit: an audit asks for the same ones on every row. */
const chosenLimits = new WeakMap<LimitFacts[], Map<string, AppliedLimit[]>>();

function chooseLimits(allowance: AllowanceFacts, permit: PermitFacts | null, clubPermit: boolean): AppliedLimit[] {
  const chosen = new Map<LimitScope, AppliedLimit>();
  const candidates = allowance.limits.filter((l) => l.permitId === null || (permit !== null && l.permitId === permit.id));
  // Parcel limits first, so a permit limit must be strictly tighter to replace one.
  candidates.sort((x, y) => Number(x.permitId !== null) - Number(y.permitId !== null));
  for (const limit of candidates) {
    if (limit.scope === 'club-season' && !clubPermit) continue;
    const applied = { ...limit, fromPermit: limit.permitId !== null, base: toBase(limit.quantity, limit.unit) };
    const current = chosen.get(limit.scope);
    if (!current) chosen.set(limit.scope, applied);
    else if (sameDimension(current.unit, limit.unit) && compareDecimals(applied.base, current.base) < 0) chosen.set(limit.scope, applied);
  }
  return scopeOrder.flatMap((scope) => chosen.get(scope) ?? []);
}

/** Tallies already worked out per chosen limit, by amount used and threshold: an audit meets the same parcel-wide totals on every member's row. Never mutated. */
const workedTallies = new WeakMap<AppliedLimit, Map<string, Tally>>();

function tallyOf(limit: AppliedLimit, usedBase: string, thresholdPercent: number): Tally {
  let worked = workedTallies.get(limit);
  if (!worked) workedTallies.set(limit, (worked = new Map()));
  const key = `${usedBase}|${thresholdPercent}`;
  const known = worked.get(key);
  if (known) return known;
  if (worked.size >= 1000) worked.clear();
  const tally = workOutTally(limit, usedBase, thresholdPercent);
  worked.set(key, tally);
  return tally;
}

function workOutTally(limit: AppliedLimit, usedBase: string, thresholdPercent: number): Tally {
  const remainingBase = subtractDecimals(limit.base, usedBase);
  // Cut, not rounded, to 2 decimals, so the figure never reads 80 while the state is still within.
  const percent = compareDecimals(limit.base, '0') > 0 ? Number(divideDecimals(multiplyDecimals(usedBase, '100'), limit.base, 2, 'toward-zero')) : 100;
  return {
    scope: limit.scope,
    limit: { quantity: limit.quantity, unit: limit.unit, fromPermit: limit.fromPermit },
    used: fromBase(usedBase, limit.unit, 6),
    remaining: compareDecimals(remainingBase, '0') > 0 ? fromBase(remainingBase, limit.unit, 6) : '0',
    percent,
    state: tallyState(usedBase, limit.base, thresholdPercent),
  };
}

const usedOf = (usage: Usage, speciesId: string, scope: LimitScope) => usage[speciesId]?.[scope] ?? '0';

/** One tally per limit in force for this species, in scope order (visit, day, season, parcel-season, club-season). */
export function talliesFor(allowance: AllowanceFacts, usage: Usage, context: TallyContext): Tally[] {
  return limitsInForce(allowance, context).map((limit) => tallyOf(limit, usedOf(usage, allowance.speciesId, limit.scope), context.thresholdPercent));
}

export type Projection = {
  /** The tallies as they would stand with the entry saved. */
  tallies: Tally[];
  /** True when any tally would go over: the entry needs an explicit acknowledgement and is a breach. */
  wouldBreach: boolean;
  /** The scopes that would go over. */
  breaches: LimitScope[];
  /** The entry in the base unit of its dimension, as the ledger stores it. */
  entryBase: string;
};

/**
 * The tallies as they would be after a proposed entry, which counts towards every scope at once.
 * An entry in another dimension than the species' limits throws UnitMismatch.
 */
export function projectEntry(allowance: AllowanceFacts, usage: Usage, entry: { quantity: string; unit: Unit }, context: TallyContext): Projection {
  if (!(entry.unit in units)) throw new RangeError(`unknown unit: ${entry.unit}`);
  const limits = limitsInForce(allowance, context);
  const other = limits.find((l) => !sameDimension(entry.unit, l.unit));
  if (other) throw new UnitMismatch(entry.unit, other.unit);
  const entryBase = toBase(entry.quantity, entry.unit);
  const tallies = limits.map((limit) => tallyOf(limit, addDecimals(usedOf(usage, allowance.speciesId, limit.scope), entryBase), context.thresholdPercent));
  const breaches = tallies.filter((t) => t.state === 'over').map((t) => t.scope);
  return { tallies, wouldBreach: breaches.length > 0, breaches, entryBase };
}
