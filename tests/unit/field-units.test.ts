import { describe, expect, it } from 'vitest';
import {
  addDecimals, compareDecimals, convert, divideDecimals, fromBase, multiplyDecimals, toBase, toBaseScaled, UnitMismatch, units, unitsOfDimension,
} from '../../src/lib/units';

// Exact SI values and worked cases from REFERENCES §1; the source of each is named beside it.

describe('convert: worked cases (REFERENCES §1)', () => {
  it('given 2 US gallons, it gives 7.570823568 L (US gallon = 231 in³ = 3.785411784 L, NIST HB 44 App. C)', () => {
    expect(convert('2', 'us-gallon', 'L')).toBe('7.570823568');
  });
  it('given 5 lb, it gives 2.26796185 kg (pound = 0.45359237 kg, 1959 agreement)', () => {
    expect(convert('5', 'lb', 'kg')).toBe('2.26796185');
  });
  it('given 12 oz, it gives 340.1942775 g (ounce = lb/16 = 28.349523125 g)', () => {
    expect(convert('12', 'oz', 'g')).toBe('340.1942775');
  });
  it('given 2 US (liquid) pints, it gives 0.946352946 L — the us-pint unit is the liquid pint', () => {
    expect(convert('2', 'us-pint', 'L')).toBe('0.946352946');
  });
  it('given a US liquid quart and pint, they are 0.946352946 L and 0.473176473 L (REFERENCES §1 table)', () => {
    expect(convert('1', 'us-quart', 'L')).toBe('0.946352946');
    expect(convert('1', 'us-pint', 'L')).toBe('0.473176473');
  });
  it('given a US cup, it is 8 US fl oz = 236.5882365 mL (NIST HB 44 App. C), and a fluid ounce is 29.5735295625 mL', () => {
    expect(convert('1', 'us-cup', 'mL')).toBe('236.5882365');
    expect(convert('0.125', 'us-cup', 'mL')).toBe('29.5735295625');
  });
  it('given 1 US gallon, it is 231 in³ with the 1959 inch (0.0254 m): 231 × 16.387064 mL', () => {
    // 1 in³ = 2.54³ cm³ = 16.387064 mL exactly (1959 agreement; 85 FR 62698).
    expect(multiplyDecimals('2.54', '2.54', '2.54')).toBe('16.387064');
    expect(convert('1', 'us-gallon', 'mL')).toBe(multiplyDecimals('231', '16.387064'));
  });
  it('given 1 kg, it is about 2.20462262185 lb (REFERENCES §1, approximate: 1000/453.59237 does not terminate)', () => {
    expect(convert('1', 'kg', 'lb', { places: 11 })).toBe('2.20462262185');
    expect(convert('1', 'kg', 'lb')).toBe('2.204622621849'); // rounded at the default 12 places
  });
  it('given units among the US customary ones, it converts exactly (their factors differ by powers of 2)', () => {
    expect(convert('1', 'us-gallon', 'us-cup')).toBe('16');
    expect(convert('3', 'us-cup', 'us-quart')).toBe('0.75');
    expect(convert('1', 'oz', 'lb')).toBe('0.0625');
  });
  it('given a quantity converted into a base unit, the result is exact beyond 12 places (0.000001 oz = 0.000028349523125 g)', () => {
    expect(convert('0.000001', 'oz', 'g')).toBe('0.000028349523125');
  });
});

describe('dry measures and area (REFERENCES §1; not harvest units, checked through the same exact arithmetic)', () => {
  // The US bushel is 2150.42 in³ (NIST HB 44 App. C ✔); a dry quart is 1/32 bushel, a dry pint 1/64.
  const bushelMl = multiplyDecimals('2150.42', '16.387064');
  it('given the bushel definition, it is 35.23907016688 L', () => {
    expect(divideDecimals(bushelMl, '1000')).toBe('35.23907016688');
  });
  it('given 3 US dry quarts, it is 3.303662828145 L', () => {
    expect(divideDecimals(multiplyDecimals(bushelMl, '3'), '32000')).toBe('3.303662828145');
  });
  it('given 2 US dry pints, it is 1.101220942715 L (the REFERENCES worked case prints 1.10122094243, which disagrees with its own dry-pint factor 0.5506104713575 L)', () => {
    expect(divideDecimals(multiplyDecimals(bushelMl, '2'), '64000')).toBe('1.101220942715');
    expect(multiplyDecimals('0.5506104713575', '2')).toBe('1.101220942715');
  });
  it('given 40 international acres (43 560 ft², foot = 0.3048 m), it is 16.1874256896 ha', () => {
    const acreM2 = multiplyDecimals('43560', '0.3048', '0.3048');
    expect(acreM2).toBe('4046.8564224');
    expect(divideDecimals(multiplyDecimals(acreM2, '40'), '10000')).toBe('16.1874256896');
  });
  it('given an imperial gallon of 4.54609 L (from memory: UK Weights and Measures Act 1985), it is about 1.2009499255 US gal', () => {
    expect(divideDecimals('4546.09', units['us-gallon'].toBase, 10)).toBe('1.2009499255');
  });
});

describe('cross-dimension entries', () => {
  it('given a US quart against a gram limit, it refuses with a message a person can act on', () => {
    expect(() => convert('1', 'us-quart', 'g')).toThrow(UnitMismatch);
    expect(() => convert('1', 'us-quart', 'g')).toThrow('That is a volume (US quart) but this limit counts mass (g); weigh it, or enter it in g, kg, oz or lb.');
  });
  it('given grams against a litre limit, it asks for a volume unit', () => {
    expect(() => convert('100', 'g', 'L')).toThrow('That is a mass (g) but this limit counts volume (L); measure its volume, or enter it in mL, L, US cup, US pint, US quart or US gallon.');
  });
  it('given bulbs against a mass limit, and grams against a count limit, it refuses both ways', () => {
    expect(() => convert('50', 'bulb', 'g')).toThrow('That is a count (bulbs) but this limit counts mass (g); weigh it, or enter it in g, kg, oz or lb.');
    expect(() => convert('200', 'g', 'plant')).toThrow('That is a mass (g) but this limit counts items (plants); count them, or enter it in stems, bulbs, fruiting bodies or plants.');
  });
  it('given a mismatch, it carries a stable code, a 400 status and the field', () => {
    const error = (() => { try { convert('1', 'us-cup', 'kg'); } catch (e) { return e; } })() as UnitMismatch;
    expect(error.toJSON()).toEqual({ error: { code: 'unit-mismatch', message: expect.stringContaining('US cup'), field: 'unit' } });
  });
  it('given the units of mass, it lists them for a sentence', () => {
    expect(unitsOfDimension('mass')).toBe('g, kg, oz or lb');
  });
});

describe('no drift', () => {
  it('given ten entries of 0.1 oz, their sum is exactly 1 oz — where floating point gives 0.9999999999999999', () => {
    let float = 0;
    for (let i = 0; i < 10; i += 1) float += 0.1;
    expect(float).not.toBe(1);
    const sum = addDecimals(...Array.from({ length: 10 }, () => toBase('0.1', 'oz')));
    expect(sum).toBe(toBase('1', 'oz'));
    expect(sum).toBe('28.349523125');
    expect(fromBase(sum, 'oz')).toBe('1');
  });
  it('given 0.1 L and 0.2 L, the sum is exactly 0.3 L', () => {
    expect(fromBase(addDecimals(toBase('0.1', 'L'), toBase('0.2', 'L')), 'L')).toBe('0.3');
  });
  it('given 1 g in oz, which has no finite decimal, it rounds once at 12 places: back in grams it is within half a 12th place of 1 g', () => {
    const inOz = convert('1', 'g', 'oz');
    expect(inOz).toMatch(/^0\.0352739619\d{0,2}$/); // 1 g ≈ 0.035274 oz (from memory)
    const error = addDecimals(toBase(inOz, 'oz'), '-1');
    const halfUlp = multiplyDecimals('0.0000000000005', units.oz.toBase);
    expect(compareDecimals(error.replace('-', ''), halfUlp)).toBeLessThanOrEqual(0);
  });
  it('given the existing scaled helper, it still agrees with toBase (current export kept working)', () => {
    expect(toBaseScaled('12', 'oz')).toBe(340194277500000000000n);
    expect(toBase('12', 'oz')).toBe('340.1942775');
  });
  it('given a malformed quantity, it throws RangeError', () => {
    expect(() => toBase('1,5', 'g')).toThrow(RangeError);
    expect(() => toBase('1e3', 'g')).toThrow(RangeError);
  });
});
