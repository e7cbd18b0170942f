import { formatLimit, formatSeasonWindows } from './tally-words';
import { compareDecimals } from './units';

/**
 * What changed in an allowance, in words, for the parcel's history: "season Sep 1 – Oct 31 →
 * Sep 1 – Nov 30", "limit 250 g a visit → 500 g a visit", "added 2 kg a season". Pure: the
 * history stores the sentences as they read when the change was made.
 */
export type AllowanceTerms = {
  seasons: readonly { start: string; end: string }[];
  methods: readonly string[];
  limits: readonly { scope: string; quantity: string; unit: string }[];
};

const methodWords: Record<string, string> = { cut: 'cut above ground', pick: 'pick', dig: 'dig roots or bulbs', strip: 'strip bark', 'gather-fallen': 'gather fallen' };
const methodList = (methods: readonly string[]) => (methods.length ? [...methods].sort().map((m) => methodWords[m] ?? m).join(', ') : 'none');

/** Limits are matched by scope and unit; the same scope in another unit of the same kind is a change of amount. */
const limitKey = (l: { scope: string; unit: string }) => `${l.scope}|${l.unit}`;

export function describeAllowanceChanges(before: AllowanceTerms, after: AllowanceTerms): string[] {
  const changes: string[] = [];
  const [seasonsBefore, seasonsAfter] = [formatSeasonWindows(before.seasons), formatSeasonWindows(after.seasons)];
  if (seasonsBefore !== seasonsAfter) changes.push(`season ${seasonsBefore} → ${seasonsAfter}`);
  const [methodsBefore, methodsAfter] = [methodList(before.methods), methodList(after.methods)];
  if (methodsBefore !== methodsAfter) changes.push(`methods ${methodsBefore} → ${methodsAfter}`);
  const old = new Map(before.limits.map((l) => [limitKey(l), l]));
  const kept = new Set<string>();
  for (const limit of after.limits) {
    const previous = old.get(limitKey(limit)) ?? before.limits.find((l) => l.scope === limit.scope && !after.limits.some((a) => limitKey(a) === limitKey(l)) && !kept.has(limitKey(l)));
    if (!previous) {
      changes.push(`added ${formatLimit(limit)}`);
      continue;
    }
    kept.add(limitKey(previous));
    if (previous.unit !== limit.unit || compareDecimals(previous.quantity, limit.quantity) !== 0) changes.push(`limit ${formatLimit(previous)} → ${formatLimit(limit)}`);
  }
  for (const limit of before.limits) if (!kept.has(limitKey(limit))) changes.push(`removed ${formatLimit(limit)}`);
  return changes;
}

/** The whole allowance in words, for a new one: "Sep 1 – Nov 30; pick; 500 g a visit". */
export function describeAllowance(terms: AllowanceTerms): string {
  const limits = terms.limits.length ? terms.limits.map(formatLimit).join(', ') : 'no limits';
  return `${formatSeasonWindows(terms.seasons)}; ${methodList(terms.methods)}; ${limits}`;
}
