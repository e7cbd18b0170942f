import { describe, expect, it } from 'vitest';
import { emptyFilter, matchesFilter, slugFor, type CatalogueItem } from '../../src/lib/catalogue';
import { speciesSchema } from '../../src/lib/catalogue.schemas';

const morel: CatalogueItem = {
  commonName: 'Yellow morel', scientificName: 'Morchella americana', kind: 'mushroom', usualMethods: ['cut'],
  lookalikes: [{ commonName: 'False morel', scientificName: 'Gyromitra esculenta', danger: 'deadly' }], protectedStatus: null, retired: false,
};
const leek: CatalogueItem = { commonName: 'Wild leek', scientificName: 'Allium tricoccum', kind: 'leaf', usualMethods: ['dig'], lookalikes: [], protectedStatus: 'Protected in Québec', retired: false };

describe('matchesFilter', () => {
  it('given words of the scientific name in any case, it finds the species', () => {
    expect(matchesFilter(morel, { ...emptyFilter, query: 'MORCHELLA amer' })).toBe(true);
    expect(matchesFilter(leek, { ...emptyFilter, query: 'morchella' })).toBe(false);
  });
  it('given a lookalike\'s name, it finds the species it is mistaken for', () => {
    expect(matchesFilter(morel, { ...emptyFilter, query: 'gyromitra' })).toBe(true);
  });
  it('given accents in the name, a search without them still finds it', () => {
    expect(matchesFilter({ ...leek, commonName: 'Ail des bois (Québec)' }, { ...emptyFilter, query: 'quebec' })).toBe(true);
  });
  it('given filters of kind, danger and protection, each narrows', () => {
    expect([morel, leek].filter((s) => matchesFilter(s, { ...emptyFilter, kind: 'leaf' }))).toEqual([leek]);
    expect([morel, leek].filter((s) => matchesFilter(s, { ...emptyFilter, caution: 'deadly' }))).toEqual([morel]);
    expect([morel, leek].filter((s) => matchesFilter(s, { ...emptyFilter, caution: 'protected' }))).toEqual([leek]);
    expect([morel, leek].filter((s) => matchesFilter(s, { ...emptyFilter, method: 'dig' }))).toEqual([leek]);
  });
  it('given a retired species, it is hidden unless retired ones are asked for', () => {
    expect(matchesFilter({ ...leek, retired: true }, emptyFilter)).toBe(false);
    expect(matchesFilter({ ...leek, retired: true }, { ...emptyFilter, includeRetired: true })).toBe(true);
  });
});

describe('speciesSchema', () => {
  const valid = { commonName: 'Test', scientificName: 'Testus', kind: 'leaf', usualUnit: 'g', cautions: [{ text: 'Careful.', sourceTitle: 'A guide' }] };
  it('given a caution without a source, it asks for one beside that field', () => {
    const result = speciesSchema.safeParse({ ...valid, cautions: [{ text: 'Careful.', sourceTitle: ' ' }] });
    expect(result.success).toBe(false);
    expect(result.error?.issues[0]?.path).toEqual(['cautions', 0, 'sourceTitle']);
    expect(result.error?.issues[0]?.message).toMatch(/^Name the source of this caution/);
  });
  it('given a source address that is not a web address, it refuses it; an empty one is no address', () => {
    expect(speciesSchema.safeParse({ ...valid, cautions: [{ text: 'x', sourceTitle: 'y', sourceUrl: 'javascript:alert(1)' }] }).success).toBe(false);
    expect(speciesSchema.parse({ ...valid, cautions: [{ text: 'x', sourceTitle: 'y', sourceUrl: '' }] }).cautions[0]?.sourceUrl).toBeNull();
  });
  it('given no caution at all, it refuses the species', () => {
    expect(speciesSchema.safeParse({ ...valid, cautions: [] }).success).toBe(false);
  });
});

describe('slugFor', () => {
  it('given a name with accents and punctuation, it makes lower-case words joined by hyphens', () => {
    expect(slugFor('Cèpe (King bolete)')).toBe('cepe-king-bolete');
  });
});
