import { describe, expect, it } from 'vitest';
import { describeAllowance, describeAllowanceChanges } from '../../src/lib/allowance-changes';
import { listingNeeds, listingRefusal } from '../../src/lib/listing';

/* The parcel's history in words. Month abbreviations are en-US's (CLDR, from memory ✱). */
const chaga = { seasons: [{ start: '11-01', end: '03-15' }], methods: ['strip'], limits: [{ scope: 'visit', quantity: '250.000000', unit: 'g' }] };

describe('describeAllowanceChanges', () => {
  it('given only a larger visit limit, it names the old and the new limit', () => {
    expect(describeAllowanceChanges(chaga, { ...chaga, limits: [{ scope: 'visit', quantity: '500', unit: 'g' }] })).toEqual(['limit 250 g a visit → 500 g a visit']);
  });
  it('given the same amount written another way ("250" for "250.000000"), it sees no change', () => {
    expect(describeAllowanceChanges(chaga, { ...chaga, limits: [{ scope: 'visit', quantity: '250', unit: 'g' }] })).toEqual([]);
  });
  it('given a new unit for the same scope, a new season, another method, an added and a removed limit, it lists each', () => {
    const before = { ...chaga, limits: [...chaga.limits, { scope: 'day', quantity: '1', unit: 'kg' }] };
    const after = { seasons: [{ start: '10-15', end: '03-15' }], methods: ['strip', 'cut'], limits: [{ scope: 'visit', quantity: '0.5', unit: 'kg' }, { scope: 'season', quantity: '2', unit: 'kg' }] };
    expect(describeAllowanceChanges(before, after)).toEqual([
      'season Nov 1 – Mar 15, across New Year → Oct 15 – Mar 15, across New Year',
      'methods strip bark → cut above ground, strip bark',
      'limit 250 g a visit → 0.5 kg a visit',
      'added 2 kg a season',
      'removed 1 kg a day',
    ]);
  });
  it('given a new allowance, it describes it whole', () => {
    expect(describeAllowance(chaga)).toBe('Nov 1 – Mar 15, across New Year; strip bark; 250 g a visit');
  });
});

describe('listingNeeds', () => {
  it('given no allowance and no terms, it names both; given both, nothing', () => {
    expect(listingNeeds({ allowances: 0, hasTerms: false })).toHaveLength(2);
    expect(listingNeeds({ allowances: 2, hasTerms: true })).toEqual([]);
    expect(listingRefusal({ allowances: 2, hasTerms: true })).toBeNull();
  });
  it('given an allowance but no terms, the refusal names only the terms, as a sentence', () => {
    const refusal = listingRefusal({ allowances: 1, hasTerms: false }) ?? '';
    expect(refusal).toMatch(/^Before foragers can ask for access, the parcel needs terms: .*\. Add it, then open the parcel to requests\.$/);
    expect(refusal).not.toContain('allowance');
  });
});
