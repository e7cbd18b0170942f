import { describe, expect, it } from 'vitest';
import { doubtfulQuantity } from '../../src/lib/field/plausibility';
import type { Tally } from '../../src/lib/field/types';

const visitLimit = (quantity: string, unit: Tally['limit']['unit']): Tally => ({
  scope: 'visit', measure: unit === 'plant' ? 'plants' : 'mass', limit: { quantity, unit, fromPermit: false }, used: '0', remaining: quantity, percent: 0, state: 'within',
});

describe('doubtfulQuantity', () => {
  it('given 800 kg against a 1 kg visit limit (800 times it), it doubts it and suggests grams', () => {
    expect(doubtfulQuantity('800', 'kg', [visitLimit('1', 'kg')])).toMatchObject({ suggestion: 'g', limit: { scope: 'visit' } });
  });

  it('given exactly ten times the limit (10 kg of 1 kg), it does not doubt it: only over ten times asks', () => {
    expect(doubtfulQuantity('10', 'kg', [visitLimit('1', 'kg')])).toBeNull();
  });

  it('given 3 lb against a 100 g visit limit (1 lb = 453.59237 g exactly, NIST Handbook 44 App. C; 3 lb ≈ 1361 g > 1000 g), it doubts it and suggests ounces', () => {
    expect(doubtfulQuantity('3', 'lb', [visitLimit('100', 'g')])).toMatchObject({ suggestion: 'oz' });
  });

  it('given 2 lb against the same 100 g limit (≈ 907 g, under ten times), it does not doubt it', () => {
    expect(doubtfulQuantity('2', 'lb', [visitLimit('100', 'g')])).toBeNull();
  });

  it('given a count over ten times its limit, it doubts it with no smaller unit to suggest', () => {
    expect(doubtfulQuantity('500', 'plant', [visitLimit('20', 'plant')])).toMatchObject({ suggestion: null });
  });

  it('given no visit limit in the measure, or text that is not a number, it says nothing', () => {
    expect(doubtfulQuantity('800', 'kg', [visitLimit('20', 'plant')])).toBeNull();
    expect(doubtfulQuantity('lots', 'kg', [visitLimit('1', 'kg')])).toBeNull();
  });
});
