import { compareDecimals, isDecimal, measureOf, multiplyDecimals, toBase, type Unit } from '../units';
import type { Tally } from './types';

/** The unit a slip of the finger most likely meant instead: a thousandth for metric, ounces for pounds. */
const smallerUnit: Partial<Record<Unit, Unit>> = { kg: 'g', L: 'mL', lb: 'oz' };

export type Doubt = { limit: Tally; suggestion: Unit | null };

/**
 * A quantity over ten times this visit's limit in its measure is more likely a wrong unit (800 in a
 * kg field meant grams) than a harvest: the form asks before it saves. Null when it is plausible,
 * or when no visit limit counts its measure.
 */
export function doubtfulQuantity(quantity: string, unit: Unit, tallies: Tally[]): Doubt | null {
  if (!isDecimal(quantity)) return null;
  const limit = tallies.find((t) => t.scope === 'visit' && t.measure === measureOf(unit));
  if (!limit) return null;
  const ten = multiplyDecimals(toBase(limit.limit.quantity, limit.limit.unit), '10');
  if (compareDecimals(toBase(quantity, unit), ten) <= 0) return null;
  return { limit, suggestion: smallerUnit[unit] ?? null };
}
