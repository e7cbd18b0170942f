/**
 * Units of harvest limits and entries. Every factor to its measure's base unit (g, mL, or one item
 * counted) is an exact terminating decimal (NIST Handbook 44 App. C; the 1959 yard and pound
 * agreement), so quantities are added and compared exactly and never drift.
 */
import Big from 'big.js';
import { AppError } from './errors';

/**
 * What a unit measures. Mass and volume each convert exactly within themselves; stems, bulbs,
 * plants and fruiting bodies are four different things to count, so none stands in for another.
 */
export type Measure = 'mass' | 'volume' | 'stems' | 'bulbs' | 'fruiting-bodies' | 'plants';
export const measures: readonly Measure[] = ['mass', 'volume', 'stems', 'bulbs', 'fruiting-bodies', 'plants'];

export type Unit =
  | 'g' | 'kg' | 'oz' | 'lb'
  | 'mL' | 'L' | 'us-cup' | 'us-pint' | 'us-quart' | 'us-gallon' | 'us-dry-pint' | 'us-dry-quart'
  | 'stem' | 'bulb' | 'fruiting-body' | 'plant';

/**
 * Liquid and dry pints and quarts are different volumes (a dry pint is about 16 % larger), so each
 * label says which one it is (`label` names the unit in a list; `one` and `many` follow an amount). Dry measures: 1 bushel = 2150.42 in³ (NIST HB 44 App. C), a dry quart
 * 1/32 bushel, a dry pint 1/64; with 1 in³ = 16.387064 mL they are 1101.220942715 and 550.6104713575 mL.
 */
export const units: Record<Unit, { measure: Measure; toBase: string; label: string; one: string; many: string }> = {
  g: { measure: 'mass', toBase: '1', label: 'g', one: 'g', many: 'g' },
  kg: { measure: 'mass', toBase: '1000', label: 'kg', one: 'kg', many: 'kg' },
  oz: { measure: 'mass', toBase: '28.349523125', label: 'oz', one: 'oz', many: 'oz' },
  lb: { measure: 'mass', toBase: '453.59237', label: 'lb', one: 'lb', many: 'lb' },
  mL: { measure: 'volume', toBase: '1', label: 'mL', one: 'mL', many: 'mL' },
  L: { measure: 'volume', toBase: '1000', label: 'L', one: 'L', many: 'L' },
  'us-cup': { measure: 'volume', toBase: '236.5882365', label: 'US cup', one: 'US cup', many: 'US cups' },
  'us-pint': { measure: 'volume', toBase: '473.176473', label: 'US liquid pint', one: 'US liquid pint', many: 'US liquid pints' },
  'us-quart': { measure: 'volume', toBase: '946.352946', label: 'US liquid quart', one: 'US liquid quart', many: 'US liquid quarts' },
  'us-gallon': { measure: 'volume', toBase: '3785.411784', label: 'US liquid gallon', one: 'US liquid gallon', many: 'US liquid gallons' },
  'us-dry-pint': { measure: 'volume', toBase: '550.6104713575', label: 'US dry pint', one: 'US dry pint', many: 'US dry pints' },
  'us-dry-quart': { measure: 'volume', toBase: '1101.220942715', label: 'US dry quart', one: 'US dry quart', many: 'US dry quarts' },
  stem: { measure: 'stems', toBase: '1', label: 'stems', one: 'stem', many: 'stems' },
  bulb: { measure: 'bulbs', toBase: '1', label: 'bulbs', one: 'bulb', many: 'bulbs' },
  'fruiting-body': { measure: 'fruiting-bodies', toBase: '1', label: 'fruiting bodies', one: 'fruiting body', many: 'fruiting bodies' },
  plant: { measure: 'plants', toBase: '1', label: 'plants', one: 'plant', many: 'plants' },
};

export const unitCodes = Object.keys(units) as Unit[];

/** The base unit of each measure, as the ledger's totals are kept: grams, millilitres, or items. */
export const baseUnits: Record<Measure, Unit> = { mass: 'g', volume: 'mL', stems: 'stem', bulbs: 'bulb', 'fruiting-bodies': 'fruiting-body', plants: 'plant' };

export const measureOf = (unit: Unit): Measure => units[unit].measure;

export function sameMeasure(a: Unit, b: Unit) {
  return units[a].measure === units[b].measure;
}

/*
 * Exact decimal arithmetic for quantities, through big.js (arbitrary-precision decimals). A
 * quantity is read from its decimal string, never through binary floating point (where 0.1 has no
 * exact value and ten of them add up to 0.9999999999999999). Sums and products of our quantities
 * and factors are exact. The only rounding is in a division with no finite decimal (1 g in oz),
 * once, where a person reads the number; limits are compared in base units, which are exact.
 */

/** Our own constructor, so our precision and rounding never depend on anyone else's settings. */
const Decimal = Big();
/**
 * Places kept in a division before the final rounding. Quotients of our quantities (at most 16
 * decimals over at most 18 digits) that are not exactly on a rounding boundary stay further from it
 * than 10⁻⁴⁰, so rounding this intermediate never moves a result across a boundary.
 */
Decimal.DP = 40;
Decimal.RM = Big.roundHalfUp;
Decimal.strict = true;

const decimalPattern = /^[+-]?\d+(?:\.\d+)?$/;

/** A decimal string, read exactly; anything else (1,5 or 1e3) is a RangeError. */
function read(text: string): Big {
  const value = String(text).trim();
  if (!decimalPattern.test(value)) throw new RangeError(`not a decimal number: ${text}`);
  return new Decimal(value.startsWith('+') ? value.slice(1) : value);
}

/** Plain notation, no trailing zeros, and never "-0". */
function write(value: Big): string {
  return value.eq('0') ? '0' : value.toFixed();
}

/** The exact sum of decimal strings. */
export function addDecimals(...values: string[]): string {
  return write(values.reduce((sum, v) => sum.plus(read(v)), new Decimal('0')));
}

/** a − b, exactly. */
export function subtractDecimals(a: string, b: string): string {
  return write(read(a).minus(read(b)));
}

/** The exact product of decimal strings. */
export function multiplyDecimals(...values: string[]): string {
  return write(values.reduce((product, v) => product.times(read(v)), new Decimal('1')));
}

export type Rounding = 'half-up' | 'toward-zero';

/**
 * a / b: exact when the quotient has a finite decimal and `places` is not given (else 12 places);
 * rounded to `places` when given. Rounding is half up unless told ("half up" is away from zero for
 * a negative number).
 */
export function divideDecimals(a: string, b: string, places?: number, rounding: Rounding = 'half-up'): string {
  const [dividend, divisor] = [read(a), read(b)];
  if (divisor.eq('0')) throw new RangeError('division by zero');
  const quotient = dividend.div(divisor);
  if (places === undefined && quotient.times(divisor).eq(dividend)) return write(quotient);
  return write(quotient.round(places ?? 12, rounding === 'half-up' ? Big.roundHalfUp : Big.roundDown));
}

/** −1, 0 or 1 as a is less than, equal to or greater than b. */
export function compareDecimals(a: string, b: string): -1 | 0 | 1 {
  return read(a).cmp(read(b)) as -1 | 0 | 1;
}

/** Whether a string is a decimal number this module reads. */
export const isDecimal = (text: string): boolean => decimalPattern.test(String(text).trim());

/** A decimal string rounded half up to `places` decimals (for display). */
export function roundDecimal(value: string, places: number): string {
  return write(read(value).round(places, Big.roundHalfUp));
}

/**
 * The share of a limit used, in percent, rounded half up to one decimal: the one rounding of a
 * percentage everywhere in Tallywood (screens, reports, e-mail, CSV). A limit of zero reads as 100.
 */
export function percentOf(usedBase: string, limitBase: string): number {
  if (compareDecimals(limitBase, '0') <= 0) return 100;
  return Number(divideDecimals(multiplyDecimals(usedBase, '100'), limitBase, 1));
}

const measureNoun: Record<Measure, string> = {
  mass: 'a mass', volume: 'a volume', stems: 'a count of stems', bulbs: 'a count of bulbs', 'fruiting-bodies': 'a count of fruiting bodies', plants: 'a count of plants',
};
const measureCounted: Record<Measure, string> = {
  mass: 'mass', volume: 'volume', stems: 'stems', bulbs: 'bulbs', 'fruiting-bodies': 'fruiting bodies', plants: 'whole plants',
};
const measureAdvice: Record<Measure, string> = {
  mass: 'weigh it', volume: 'measure its volume', stems: 'count the stems', bulbs: 'count the bulbs', 'fruiting-bodies': 'count the fruiting bodies', plants: 'count the plants',
};

/** The units of one measure, for a sentence: "g, kg, oz or lb". */
export function unitsOfMeasure(measure: Measure): string {
  const labels = unitCodes.filter((u) => units[u].measure === measure).map((u) => units[u].label);
  return labels.length > 1 ? `${labels.slice(0, -1).join(', ')} or ${labels.at(-1)}` : (labels[0] ?? '');
}

/** What to do instead of the refused unit: "weigh it, or enter it in g, kg, oz or lb" / "count the bulbs". */
function adviceFor(measure: Measure): string {
  const choices = unitCodes.filter((u) => units[u].measure === measure);
  return choices.length > 1 ? `${measureAdvice[measure]}, or enter it in ${unitsOfMeasure(measure)}` : measureAdvice[measure];
}

/**
 * An entry in another measure than its limit. Refused, never converted: foraged produce has no
 * standard bulk density (a quart of chanterelles weighs what the packing makes it), and a stem is
 * not a bulb.
 */
export class UnitMismatch extends AppError {
  constructor(readonly from: Unit, readonly to: Unit) {
    const [f, t] = [units[from], units[to]];
    const named = (u: { measure: Measure; label: string }) => (u.measure === 'mass' || u.measure === 'volume' ? ` (${u.label})` : '');
    super(
      400,
      'unit-mismatch',
      `That is ${measureNoun[f.measure]}${named(f)} but this limit counts ${measureCounted[t.measure]}${named(t)}; ${adviceFor(t.measure)}.`,
      'unit',
    );
    this.name = 'UnitMismatch';
  }
}

/** A quantity in its measure's base unit (g, mL, or items), exactly. */
export function toBase(quantity: string, unit: Unit): string {
  return multiplyDecimals(quantity, units[unit].toBase);
}

/** A base-unit quantity in `unit`: exact where a finite decimal exists, else rounded half up to `places` (default 12). */
export function fromBase(baseQuantity: string, unit: Unit, places?: number): string {
  return divideDecimals(baseQuantity, units[unit].toBase, places);
}

/**
 * A quantity converted between two units of one measure: exact whenever the result has a finite
 * decimal (all conversions into g, kg, mL and L, and among the US liquid measures or oz and lb); a
 * result with no finite decimal (1 g in oz) is rounded half up to `places` (default 12). Throws
 * UnitMismatch across measures.
 */
export function convert(quantity: string, from: Unit, to: Unit, { places }: { places?: number } = {}): string {
  if (!sameMeasure(from, to)) throw new UnitMismatch(from, to);
  return divideDecimals(toBase(quantity, from), units[to].toBase, places);
}
