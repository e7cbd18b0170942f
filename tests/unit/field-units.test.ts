import { describe, expect, it } from 'vitest';
import { thrown } from './support';
import {
  addDecimals, compareDecimals, convert, divideDecimals, fromBase, measures, multiplyDecimals, percentOf, toBase, UnitMismatch, units, unitsOfMeasure, type Unit,
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
  it('given 2 US liquid pints, it gives 0.946352946 L — the us-pint unit is the liquid pint', () => {
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
  it('given units among the US customary liquid ones, it converts exactly (their factors differ by powers of 2)', () => {
    expect(convert('1', 'us-gallon', 'us-cup')).toBe('16');
    expect(convert('3', 'us-cup', 'us-quart')).toBe('0.75');
    expect(convert('1', 'oz', 'lb')).toBe('0.0625');
  });
  it('given a quantity converted into a base unit, the result is exact beyond 12 places (0.000001 oz = 0.000028349523125 g)', () => {
    expect(convert('0.000001', 'oz', 'g')).toBe('0.000028349523125');
  });
});

describe('US dry measures (REFERENCES §1; bushel = 2150.42 in³, NIST HB 44 App. C ✔)', () => {
  // By hand: 2150.42 × 16.387064 = 2150 × 16.387064 + 0.42 × 16.387064 = 35 232.1876 + 6.88256688
  // = 35 239.07016688 mL per bushel. A dry quart is 1/32 bushel, a dry pint 1/64 (NIST HB 44 App. C):
  // 35 239.07016688 / 2 = 17 619.53508344 / 2 = 8 809.76754172 (peck) / 2 = 4 404.88377086
  // / 2 = 2 202.44188543 / 2 = 1 101.220942715 (dry quart) / 2 = 550.6104713575 (dry pint).
  it('given the bushel definition in cubic inches, it is 35.23907016688 L (REFERENCES §1 table)', () => {
    expect(divideDecimals(multiplyDecimals('2150.42', '16.387064'), '1000')).toBe('35.23907016688');
  });
  it('given 1 US dry pint and 1 US dry quart, they are 550.6104713575 mL and 1101.220942715 mL', () => {
    expect(convert('1', 'us-dry-pint', 'mL')).toBe('550.6104713575');
    expect(convert('1', 'us-dry-quart', 'mL')).toBe('1101.220942715');
  });
  it('given 3 US dry quarts, it gives 3.303662828145 L (REFERENCES §1 worked case)', () => {
    expect(convert('3', 'us-dry-quart', 'L')).toBe('3.303662828145');
  });
  it('given 2 liquid pints and 2 dry pints, they are 0.946352946 L but 1.101220942715 L (REFERENCES §1 worked case)', () => {
    expect(convert('2', 'us-pint', 'L')).toBe('0.946352946');
    expect(convert('2', 'us-dry-pint', 'L')).toBe('1.101220942715');
  });
  it('given a dry quart, it is exactly 2 dry pints, and 32 dry quarts are exactly one bushel', () => {
    expect(convert('1', 'us-dry-quart', 'us-dry-pint')).toBe('2');
    expect(convert('32', 'us-dry-quart', 'L')).toBe('35.23907016688');
  });
  it('given a dry pint in liquid pints, it is about 1.163647 (2150.42 / 1848 = 107521/92400 = 1.1636471861…, no finite decimal)', () => {
    // (2150.42/64 in³) / (231/8 in³) = 2150.42 / 1848; 1848 × 1.1636 = 2150.3328, remainder 0.0872 / 1848 = 0.0000471861…
    expect(convert('1', 'us-dry-pint', 'us-pint', { places: 6 })).toBe('1.163647');
    expect(convert('1', 'us-dry-quart', 'us-quart', { places: 6 })).toBe('1.163647');
  });
  it('given the labels, each pint, quart and gallon says whether it is liquid or dry', () => {
    expect([units['us-pint'].label, units['us-quart'].label, units['us-gallon'].label]).toEqual(['US liquid pint', 'US liquid quart', 'US liquid gallon']);
    expect([units['us-dry-pint'].label, units['us-dry-quart'].label, units['us-cup'].label]).toEqual(['US dry pint', 'US dry quart', 'US cup']);
    expect([units['us-dry-pint'].measure, units['us-dry-quart'].measure]).toEqual(['volume', 'volume']);
  });
});

describe('area (REFERENCES §1; not a harvest unit, checked through the same exact arithmetic)', () => {
  it('given 40 international acres (43 560 ft², foot = 0.3048 m), it is 16.1874256896 ha', () => {
    const acreM2 = multiplyDecimals('43560', '0.3048', '0.3048');
    expect(acreM2).toBe('4046.8564224');
    expect(divideDecimals(multiplyDecimals(acreM2, '40'), '10000')).toBe('16.1874256896');
  });
  it('given an imperial gallon of 4.54609 L (from memory: UK Weights and Measures Act 1985), it is about 1.2009499255 US gal', () => {
    expect(divideDecimals('4546.09', units['us-gallon'].toBase, 10)).toBe('1.2009499255');
  });
});

describe('entries in another measure are refused', () => {
  it('given a US liquid quart against a gram limit, it refuses with a message a person can act on', () => {
    expect(() => convert('1', 'us-quart', 'g')).toThrow(UnitMismatch);
    expect(() => convert('1', 'us-quart', 'g')).toThrow('That is a volume (US liquid quart) but this limit counts mass (g); weigh it, or enter it in g, kg, oz or lb.');
  });
  it('given grams against a litre limit, it asks for a volume and lists every volume unit, liquid and dry', () => {
    expect(() => convert('100', 'g', 'L')).toThrow(
      'That is a mass (g) but this limit counts volume (L); measure its volume, or enter it in mL, L, US cup, US liquid pint, US liquid quart, US liquid gallon, US dry pint or US dry quart.',
    );
  });
  it('given bulbs against a mass limit, and grams against a plant count, it refuses both ways', () => {
    expect(() => convert('50', 'bulb', 'g')).toThrow('That is a count of bulbs but this limit counts mass (g); weigh it, or enter it in g, kg, oz or lb.');
    expect(() => convert('200', 'g', 'plant')).toThrow('That is a mass (g) but this limit counts whole plants; count the plants.');
  });

  // Stems, bulbs, plants and fruiting bodies are four different things to count (a leek plant is not
  // its bulb; REFERENCES §7 Quebec wild leek names "50 bulbs or 50 plants" as two limits).
  const counts: Unit[] = ['stem', 'bulb', 'plant', 'fruiting-body'];
  const advice: Record<string, string> = {
    stem: 'this limit counts stems; count the stems.',
    bulb: 'this limit counts bulbs; count the bulbs.',
    plant: 'this limit counts whole plants; count the plants.',
    'fruiting-body': 'this limit counts fruiting bodies; count the fruiting bodies.',
  };
  const noun: Record<string, string> = { stem: 'a count of stems', bulb: 'a count of bulbs', plant: 'a count of plants', 'fruiting-body': 'a count of fruiting bodies' };
  for (const from of counts) {
    for (const to of counts.filter((u) => u !== from)) {
      it(`given ${from}s against a ${to} limit, it refuses them (UnitMismatch) and says what to count`, () => {
        const error = thrown(() => convert('5', from, to));
        expect(error).toBeInstanceOf(UnitMismatch);
        expect((error as UnitMismatch).message).toBe(`That is ${noun[from]} but ${advice[to]}`);
      });
    }
    it(`given ${from}s against a ${from} limit, it takes them one for one`, () => {
      expect(convert('5', from, from)).toBe('5');
    });
  }
  it('given a mismatch, it carries a stable code, a 400 status and the field', () => {
    const error = thrown(() => convert('1', 'us-cup', 'kg')) as UnitMismatch;
    expect(error.status).toBe(400);
    expect(error.toJSON()).toEqual({ error: { code: 'unit-mismatch', message: expect.stringContaining('US cup'), field: 'unit' } });
  });
  it('given the units of each measure, it lists them for a sentence', () => {
    expect(unitsOfMeasure('mass')).toBe('g, kg, oz or lb');
    expect(unitsOfMeasure('volume')).toBe('mL, L, US cup, US liquid pint, US liquid quart, US liquid gallon, US dry pint or US dry quart');
    expect(unitsOfMeasure('bulbs')).toBe('bulbs');
    expect(unitsOfMeasure('fruiting-bodies')).toBe('fruiting bodies');
  });
  it('given the measures, there are six and each count has its own unit', () => {
    expect(measures).toEqual(['mass', 'volume', 'stems', 'bulbs', 'fruiting-bodies', 'plants']);
    expect(counts.map((u) => units[u].measure)).toEqual(['stems', 'bulbs', 'plants', 'fruiting-bodies']);
  });
});

describe('percentOf: half up to one decimal', () => {
  // Worked by hand: used × 100 / limit, then the second decimal decides (5 and above rounds up).
  it('given 1 of 8, it is exactly 12.5 %', () => {
    expect(percentOf('1', '8')).toBe(12.5);
  });
  it('given 1 of 3 (33.333… %), it is 33.3 %, and 2 of 3 (66.666… %) is 66.7 %', () => {
    expect(percentOf('1', '3')).toBe(33.3);
    expect(percentOf('2', '3')).toBe(66.7);
  });
  it('given a share exactly on a .x5 boundary, it rounds up: 1 of 16 = 6.25 % → 6.3 %, 3 of 16 = 18.75 % → 18.8 %, 1 of 32 = 3.125 % → 3.1 %', () => {
    expect(percentOf('1', '16')).toBe(6.3);
    expect(percentOf('3', '16')).toBe(18.8);
    expect(percentOf('1', '32')).toBe(3.1);
  });
  it('given 1 oz of 1 lb and 1 US cup of 1 US liquid gallon, both 1/16 = 6.25 %, it is 6.3 % (REFERENCES §1 factors)', () => {
    expect(percentOf(toBase('1', 'oz'), toBase('1', 'lb'))).toBe(6.3);
    expect(percentOf(toBase('1', 'us-cup'), toBase('1', 'us-gallon'))).toBe(6.3);
  });
  it('given 12.45 % (a boundary that binary floating point cannot hold exactly), it is 12.5 %; 12.35 % is 12.4 %', () => {
    expect(percentOf('12.45', '100')).toBe(12.5);
    expect(percentOf('0.1235', '1')).toBe(12.4);
  });
  it('given 0.0005 above a boundary (12.4505 %), it rounds up to 12.5 %; 0.0005 below it (12.4495 %), down to 12.4 %', () => {
    expect(percentOf('12.4505', '100')).toBe(12.5);
    expect(percentOf('12.4495', '100')).toBe(12.4);
  });
  it('given 135.048569375 g of 200 g (67.5242846875 %), it is 67.5 %; 163.3980925 g (81.69904625 %) is 81.7 %', () => {
    expect(percentOf('135.048569375', '200')).toBe(67.5);
    expect(percentOf('163.3980925', '200')).toBe(81.7);
  });
  it('given nothing used, it is 0 %; use past the limit reads past 100 (250 of 200 = 125 %)', () => {
    expect(percentOf('0', '500')).toBe(0);
    expect(percentOf('250', '200')).toBe(125);
  });
  it('given a limit of zero, it reads as 100 % whether or not anything was taken', () => {
    expect(percentOf('0', '0')).toBe(100);
    expect(percentOf('5', '0')).toBe(100);
  });
});

describe('divideDecimals', () => {
  it('given a quotient with a finite decimal and no places, it is exact (1/8 = 0.125, 1 / 1024 = 0.0009765625)', () => {
    expect(divideDecimals('1', '8')).toBe('0.125');
    expect(divideDecimals('1', '1024')).toBe('0.0009765625');
  });
  it('given places, it rounds half up unless told toward zero (2/3 = 0.666…: 0.7 or 0.6; 1/8 to 2 places: 0.13 or 0.12)', () => {
    expect(divideDecimals('2', '3', 1)).toBe('0.7');
    expect(divideDecimals('2', '3', 1, 'toward-zero')).toBe('0.6');
    expect(divideDecimals('1', '8', 2)).toBe('0.13');
    expect(divideDecimals('1', '8', 2, 'toward-zero')).toBe('0.12');
  });
  it('given a quotient with no finite decimal and no places, it keeps 12 (1/3 = 0.333333333333)', () => {
    expect(divideDecimals('1', '3')).toBe('0.333333333333');
  });
  it('given a zero divisor, it throws RangeError', () => {
    expect(() => divideDecimals('1', '0')).toThrow(RangeError);
  });
});

describe('no drift (big.js)', () => {
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
  it('given ten entries of 0.1 US dry pint, their sum is exactly 1 dry pint (550.6104713575 mL)', () => {
    const sum = addDecimals(...Array.from({ length: 10 }, () => toBase('0.1', 'us-dry-pint')));
    expect(sum).toBe('550.6104713575');
    expect(fromBase(sum, 'us-dry-pint')).toBe('1');
  });
  it('given 1 g in oz, which has no finite decimal, it rounds once at 12 places: back in grams it is within half a 12th place of 1 g', () => {
    const inOz = convert('1', 'g', 'oz');
    expect(inOz).toMatch(/^0\.0352739619\d{0,2}$/); // 1 g ≈ 0.035274 oz (from memory)
    const error = addDecimals(toBase(inOz, 'oz'), '-1');
    const halfUlp = multiplyDecimals('0.0000000000005', units.oz.toBase);
    expect(compareDecimals(error.replace('-', ''), halfUlp)).toBeLessThanOrEqual(0);
  });
  it('given a malformed quantity, it throws RangeError', () => {
    expect(() => toBase('1,5', 'g')).toThrow(RangeError);
    expect(() => toBase('1e3', 'g')).toThrow(RangeError);
  });
});
