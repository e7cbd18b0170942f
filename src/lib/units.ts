/**
 * Units of harvest limits and entries. Every factor to the dimension's base unit (g, mL, count)
 * is an exact terminating decimal (NIST Handbook 44 App. C; the 1959 yard and pound agreement),
 * so quantities are compared as scaled integers and never drift.
 */
import { AppError } from './errors';

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

/*
 * Exact decimal arithmetic for quantities.
 *
 * Why the arithmetic does not drift: a quantity is read from its decimal string into an integer and
 * a power of ten (0.1 is 1 × 10⁻¹, held exactly), and every factor above is a terminating decimal
 * by definition (1 lb = 0.45359237 kg exactly; 1 US gal = 231 in³ with 1 in = 2.54 cm exactly).
 * Sums and products of such numbers are integers times powers of ten, so BigInt computes them with
 * no rounding at all; nothing passes through binary floating point, where 0.1 has no exact value
 * and ten of them add up to 0.9999999999999999. The only rounding is in a division that has no
 * finite decimal (1 g in oz), and that happens once, at the end, where a person reads the number;
 * limits are compared in base units, which are always exact.
 */

/** value = units × 10^-scale */
type Decimal = { units: bigint; scale: number };

const decimalPattern = /^([+-])?(\d+)(?:\.(\d+))?$/;
const powers: bigint[] = [];
const pow10 = (n: number) => (powers[n] ??= 10n ** BigInt(n));

/** Parsed decimals by their text: an audit compares the same limits and totals thousands of times. Never mutated. */
const parsed = new Map<string, Decimal>();

function parseDecimal(text: string): Decimal {
  const key = String(text);
  const known = parsed.get(key);
  if (known) return known;
  const match = decimalPattern.exec(key.trim());
  if (!match) throw new RangeError(`not a decimal number: ${text}`);
  const [, sign, whole = '0', fraction = ''] = match;
  const units = BigInt(whole + fraction);
  const decimal = { units: sign === '-' ? -units : units, scale: fraction.length };
  if (parsed.size >= 10_000) parsed.clear();
  parsed.set(key, decimal);
  return decimal;
}

function formatDecimal({ units, scale }: Decimal): string {
  const negative = units < 0n;
  const digits = (negative ? -units : units).toString().padStart(scale + 1, '0');
  const whole = digits.slice(0, digits.length - scale);
  const fraction = digits.slice(digits.length - scale).replace(/0+$/, '');
  if (units === 0n) return '0';
  return `${negative ? '-' : ''}${whole}${fraction ? `.${fraction}` : ''}`;
}

function align(a: Decimal, b: Decimal): [bigint, bigint, number] {
  const scale = Math.max(a.scale, b.scale);
  return [a.units * pow10(scale - a.scale), b.units * pow10(scale - b.scale), scale];
}

export type Rounding = 'half-away-from-zero' | 'toward-zero';

/** a / b rounded to `places` decimals, or exactly when the quotient has a finite decimal. */
function divide(a: Decimal, b: Decimal, places: number | 'exact-or-12', rounding: Rounding = 'half-away-from-zero'): Decimal {
  if (b.units === 0n) throw new RangeError('division by zero');
  // a/b = (a.units × 10^b.scale) / (b.units × 10^a.scale)
  let numerator = a.units * pow10(b.scale);
  let denominator = b.units * pow10(a.scale);
  if (denominator < 0n) [numerator, denominator] = [-numerator, -denominator];
  let target = typeof places === 'number' ? places : 12;
  if (places === 'exact-or-12') {
    const exact = terminatingPlaces(numerator, denominator);
    if (exact !== null) target = exact;
  }
  const scaled = numerator * pow10(target);
  let quotient = scaled / denominator;
  const remainder = scaled % denominator;
  const twice = (remainder < 0n ? -remainder : remainder) * 2n;
  if (rounding === 'half-away-from-zero' && twice >= denominator) quotient += scaled < 0n ? -1n : 1n;
  return { units: quotient, scale: target };
}

/** Decimal places of n/d when it terminates (d has no prime factor but 2 and 5 once reduced), else null. */
function terminatingPlaces(n: bigint, d: bigint): number | null {
  const gcd = (x: bigint, y: bigint): bigint => (y === 0n ? (x < 0n ? -x : x) : gcd(y, x % y));
  let rest = d / gcd(n === 0n ? d : n, d);
  let twos = 0;
  let fives = 0;
  while (rest % 2n === 0n) { rest /= 2n; twos += 1; }
  while (rest % 5n === 0n) { rest /= 5n; fives += 1; }
  return rest === 1n ? Math.max(twos, fives) : null;
}

/** The exact sum of decimal strings. */
export function addDecimals(...values: string[]): string {
  return formatDecimal(values.map(parseDecimal).reduce((sum, v) => { const [x, y, scale] = align(sum, v); return { units: x + y, scale }; }, { units: 0n, scale: 0 }));
}

/** a − b, exactly. */
export function subtractDecimals(a: string, b: string): string {
  const [x, y, scale] = align(parseDecimal(a), parseDecimal(b));
  return formatDecimal({ units: x - y, scale });
}

/** The exact product of decimal strings. */
export function multiplyDecimals(...values: string[]): string {
  return formatDecimal(values.map(parseDecimal).reduce((p, v) => ({ units: p.units * v.units, scale: p.scale + v.scale }), { units: 1n, scale: 0 }));
}

/** a / b: exact when the quotient has a finite decimal and `places` is not given; otherwise rounded (half away from zero unless told). */
export function divideDecimals(a: string, b: string, places?: number, rounding?: Rounding): string {
  return formatDecimal(divide(parseDecimal(a), parseDecimal(b), places ?? 'exact-or-12', rounding));
}

/** −1, 0 or 1 as a is less than, equal to or greater than b. */
export function compareDecimals(a: string, b: string): -1 | 0 | 1 {
  const [x, y] = align(parseDecimal(a), parseDecimal(b));
  return x < y ? -1 : x > y ? 1 : 0;
}

/** A decimal string rounded half away from zero to `places` decimals (for display). */
export function roundDecimal(value: string, places: number): string {
  return divideDecimals(value, '1', places);
}

const dimensionNoun: Record<Dimension, string> = { mass: 'mass', volume: 'volume', count: 'count' };
const dimensionCounted: Record<Dimension, string> = { mass: 'mass', volume: 'volume', count: 'items' };
const dimensionAdvice: Record<Dimension, string> = { mass: 'weigh it', volume: 'measure its volume', count: 'count them' };

/** The units of one dimension, for a sentence: "g, kg, oz or lb". */
export function unitsOfDimension(dimension: Dimension): string {
  const labels = unitCodes.filter((u) => units[u].dimension === dimension).map((u) => units[u].label);
  return labels.length > 1 ? `${labels.slice(0, -1).join(', ')} or ${labels.at(-1)}` : (labels[0] ?? '');
}

/**
 * An entry in another dimension than its limit. Refused, never converted through a density: foraged
 * produce has no standard bulk density (a quart of chanterelles weighs what the packing makes it).
 */
export class UnitMismatch extends AppError {
  constructor(readonly from: Unit, readonly to: Unit) {
    const [f, t] = [units[from], units[to]];
    super(
      400,
      'unit-mismatch',
      `That is a ${dimensionNoun[f.dimension]} (${f.label}) but this limit counts ${dimensionCounted[t.dimension]} (${t.label}); ` +
        `${dimensionAdvice[t.dimension]}, or enter it in ${unitsOfDimension(t.dimension)}.`,
      'unit',
    );
    this.name = 'UnitMismatch';
  }
}

/** A quantity in its dimension's base unit (g, mL or count), exactly. */
export function toBase(quantity: string, unit: Unit): string {
  return multiplyDecimals(quantity, units[unit].toBase);
}

/** A base-unit quantity (g, mL or count) in `unit`: exact where a finite decimal exists, else rounded to `places` (default 12). */
export function fromBase(baseQuantity: string, unit: Unit, places?: number): string {
  return divideDecimals(baseQuantity, units[unit].toBase, places);
}

/**
 * A quantity converted between two units of one dimension. Exact whenever the result has a finite
 * decimal (all conversions into g, kg, mL, L, and among US cup/pint/quart/gallon or oz/lb); a result
 * with no finite decimal (1 g in oz) is rounded half away from zero to `places` decimals (default 12,
 * a picogram on an ounce). Throws UnitMismatch across dimensions.
 */
export function convert(quantity: string, from: Unit, to: Unit, { places }: { places?: number } = {}): string {
  if (!sameDimension(from, to)) throw new UnitMismatch(from, to);
  return divideDecimals(toBase(quantity, from), units[to].toBase, places);
}
