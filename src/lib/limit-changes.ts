import type { LimitScope } from './field/types';
import { formatLimit, limitPerWords } from './tally-words';
import { compareDecimals, measureOf, toBase, type Unit } from './units';

/** One limit that applies to a permit, named by its species: the parcel's own, or the permit's tighter one. */
export type NamedLimit = { speciesName: string; scope: LimitScope; quantity: string; unit: Unit };

/** A limit that is tighter than before, or new where there was none. */
export type LimitChange = { speciesName: string; now: NamedLimit; was: NamedLimit | null };

const key = (l: NamedLimit) => `${l.speciesName}\u0000${l.scope}\u0000${measureOf(l.unit)}`;

/** The limit that binds for each species, scope and measure: the smallest of those that apply. */
export function bindingLimits(limits: readonly NamedLimit[]): Map<string, NamedLimit> {
  const binding = new Map<string, NamedLimit>();
  for (const limit of limits) {
    const held = binding.get(key(limit));
    if (!held || compareDecimals(toBase(limit.quantity, limit.unit), toBase(held.quantity, held.unit)) < 0) binding.set(key(limit), limit);
  }
  return binding;
}

/**
 * The limits a holder now meets sooner than before: a binding limit that is smaller, or one where
 * there was none. A limit raised or removed is not a tightening and is left out.
 */
export function tightenedLimits(before: readonly NamedLimit[], after: readonly NamedLimit[]): LimitChange[] {
  const was = bindingLimits(before);
  const changes: LimitChange[] = [];
  for (const [k, now] of bindingLimits(after)) {
    const old = was.get(k) ?? null;
    if (old && compareDecimals(toBase(now.quantity, now.unit), toBase(old.quantity, old.unit)) >= 0) continue;
    changes.push({ speciesName: now.speciesName, now, was: old });
  }
  return changes.sort((a, b) => a.speciesName.localeCompare(b.speciesName));
}

/** "Chaga: 1 kg a season, was 2 kg a season"; a new limit "Chaga: 500 g a day, was no limit a day". */
export const limitChangeLine = (c: LimitChange): string => `${c.speciesName}: ${formatLimit(c.now)}, was ${c.was ? formatLimit(c.was) : `no limit ${limitPerWords[c.now.scope]}`}`;
