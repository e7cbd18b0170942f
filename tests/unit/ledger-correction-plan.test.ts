import { describe, expect, it } from 'vitest';
import type { LedgerEntry, LedgerQuantity } from '../../src/db/ledger.queries';
import { adjustTo, chainMeasures, chainOf, reverseAll } from '../../src/components/ledger/correction-plan';

/** A ledger entry with only what the correction plan reads; the rest is filler. */
function entry(id: string, recordedAt: string, quantities: LedgerQuantity[], links: { corrects?: string; root?: string } = {}): LedgerEntry {
  return {
    id, localDate: '2026-11-14', countedOn: '2026-11-14', recordedAt, timeZone: 'America/New_York', parcelId: 'p', parcelName: 'North lot', speciesId: 's',
    speciesName: 'Chaga', scientificName: 'Inonotus obliquus', method: 'strip', quantities, breach: false, acknowledgedOver: false,
    correctsEntryId: links.corrects ?? null, rootEntryId: links.root ?? null, correctionReason: links.corrects ? 'weighed again' : null, isCorrected: false,
    recordedByName: null, hasPhoto: false, photoUploadId: null, longitude: null, latitude: null, seasonStart: '2026-11-01', seasonEnd: '2027-03-15',
  };
}
const oz = (quantity: string, base: string): LedgerQuantity => ({ measure: 'mass', quantity, unit: 'oz', baseQuantity: base });
const plants = (quantity: string): LedgerQuantity => ({ measure: 'plants', quantity, unit: 'plant', baseQuantity: quantity });

// REFERENCES §1: 1 oz = 28.349523125 g exactly, 1 lb = 16 oz = 453.59237 g; 12 oz = 340.1942775 g.
const root = entry('a', '2026-11-14T15:00:00.000Z', [oz('12', '340.1942775'), plants('30')]);
const first = entry('b', '2026-11-15T01:00:00.000Z', [oz('-2', '-56.69904625')], { corrects: 'a', root: 'a' });
const second = entry('c', '2026-11-16T01:00:00.000Z', [plants('-5')], { corrects: 'b', root: 'a' });
const other = entry('d', '2026-11-15T00:00:00.000Z', [oz('4', '113.3980925')]);

describe('the correction plan of a ledger entry', () => {
  it('given an entry corrected twice, it finds the whole chain oldest first from any entry of it, and nothing of another entry', () => {
    const ledger = [second, other, first, root];
    expect(chainOf(ledger, second).map((e) => e.id)).toEqual(['a', 'b', 'c']);
    expect(chainOf(ledger, root).map((e) => e.id)).toEqual(['a', 'b', 'c']);
    expect(chainOf(ledger, other).map((e) => e.id)).toEqual(['d']);
  });

  it('given 12 oz and 30 plants less 2 oz and 5 plants, it counts 10 oz and 25 plants in the first entry\'s units', () => {
    expect(chainMeasures([root, first, second])).toEqual([{ measure: 'mass', unit: 'oz', counts: '10' }, { measure: 'plants', unit: 'plant', counts: '25' }]);
  });

  it('given a correction made in pounds, it counts it in ounces (1 lb = 16 oz)', () => {
    const inPounds = entry('e', '2026-11-17T01:00:00.000Z', [{ measure: 'mass', quantity: '-0.25', unit: 'lb', baseQuantity: '-113.3980925' }], { corrects: 'a', root: 'a' });
    expect(chainMeasures([root, inPounds])[0]).toEqual({ measure: 'mass', unit: 'oz', counts: '8' });
  });

  it('given new amounts, it sends the signed difference of each measure that changes and leaves out one that does not', () => {
    const measures = chainMeasures([root, first, second]);
    expect(adjustTo(measures, ['7.5', '25'])).toEqual([{ quantity: '-2.5', unit: 'oz' }]);
    expect(adjustTo(measures, ['10', '31'])).toEqual([{ quantity: '6', unit: 'plant' }]);
    expect(adjustTo(measures, ['10', '25'])).toEqual([]);
  });

  it('given a reversal, it takes back what the chain still counts in every measure, and nothing once it counts nothing', () => {
    const measures = chainMeasures([root, first, second]);
    expect(reverseAll(measures)).toEqual([{ quantity: '-10', unit: 'oz' }, { quantity: '-25', unit: 'plant' }]);
    const reversed = entry('f', '2026-11-18T01:00:00.000Z', [oz('-10', '-283.49523125'), plants('-25')], { corrects: 'c', root: 'a' });
    expect(reverseAll(chainMeasures([root, first, second, reversed]))).toEqual([]);
  });
});
