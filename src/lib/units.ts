/**
 * Units of harvest limits and entries. Every factor to the dimension's base unit (g, mL, count)
 * is an exact terminating decimal (NIST Handbook 44 App. C; the 1959 yard and pound agreement),
 * so quantities are compared as scaled integers and never drift.
 */
export type Dimension = 'mass' | 'volume' | 'count';
export type Unit = 'g' | 'kg' | 'oz' | 'lb' | 'mL' | 'L' | 'us-cup' | 'us-pint' | 'us-quart' | 'us-gallon' | 'stem' | 'bulb' | 'fruiting-body' | 'plant';

export const units: Record<Unit, { dimension: Dimension; toBase: string; label: string }> = {
  g: { dimension: 'mass', toBase: '1', label: 'g' },
  kg: { dimension: 'mass', toBase: '1000', label: 'kg' },
  oz: { dimension: 'mass', toBase: '28.349523125', label: 'oz' },
  lb: { dimension: 'mass', toBase: '453.59237', label: 'lb' },
  mL: { dimension: 'volume', toBase: '1', label: 'mL' },
  L: { dimension: 'volume', toBase: '1000', label: 'L' },
  'us-cup': { dimension: 'volume', toBase: '236.5882365', label: 'US cup' },
  'us-pint': { dimension: 'volume', toBase: '473.176473', label: 'US pint' },
  'us-quart': { dimension: 'volume', toBase: '946.352946', label: 'US quart' },
  'us-gallon': { dimension: 'volume', toBase: '3785.411784', label: 'US gallon' },
  stem: { dimension: 'count', toBase: '1', label: 'stems' },
  bulb: { dimension: 'count', toBase: '1', label: 'bulbs' },
  'fruiting-body': { dimension: 'count', toBase: '1', label: 'fruiting bodies' },
  plant: { dimension: 'count', toBase: '1', label: 'plants' },
};

export const unitCodes = Object.keys(units) as Unit[];

/** Fixed-point scale: 10^-12 of a base unit is finer than any product of our factors with a 6-decimal quantity. */
const scaleDigits = 18;

/** A decimal string as an integer count of 10^-18 (no floating point anywhere). */
export function toScaled(decimal: string): bigint {
  const match = /^(-)?(\d+)(?:\.(\d+))?$/.exec(decimal.trim());
  if (!match) throw new RangeError(`not a decimal number: ${decimal}`);
  const [, sign, whole, fraction = ''] = match;
  if (fraction.length > scaleDigits) throw new RangeError(`too many decimal places: ${decimal}`);
  const value = BigInt(whole + fraction.padEnd(scaleDigits, '0'));
  return sign ? -value : value;
}

/** A quantity in the base unit of its dimension, scaled by 10^18. */
export function toBaseScaled(quantity: string, unit: Unit): bigint {
  return (toScaled(quantity) * toScaled(units[unit].toBase)) / 10n ** BigInt(scaleDigits);
}

export function sameDimension(a: Unit, b: Unit) {
  return units[a].dimension === units[b].dimension;
}
