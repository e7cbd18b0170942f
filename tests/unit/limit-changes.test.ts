import { describe, expect, it } from 'vitest';
import { limitChangeLine, tightenedLimits, type NamedLimit } from '../../src/lib/limit-changes';

/* Which limits a landowner's change made tighter for a permit's holder, and how the notice words each. */

const chaga = (scope: NamedLimit['scope'], quantity: string, unit: NamedLimit['unit']): NamedLimit => ({ speciesName: 'Chaga', scope, quantity, unit });

describe('tightenedLimits', () => {
  it('given a season limit lowered from 2 kg to 1 kg, it reads "Chaga: 1 kg a season, was 2 kg a season"', () => {
    const changes = tightenedLimits([chaga('season', '2', 'kg')], [chaga('season', '1', 'kg')]);
    expect(changes.map(limitChangeLine)).toEqual(['Chaga: 1 kg a season, was 2 kg a season']);
  });

  it('given a limit raised, removed or restated in another unit of the same size, it reports nothing', () => {
    expect(tightenedLimits([chaga('season', '1', 'kg')], [chaga('season', '2', 'kg')])).toEqual([]);
    expect(tightenedLimits([chaga('season', '1', 'kg')], [])).toEqual([]);
    expect(tightenedLimits([chaga('season', '1', 'kg')], [chaga('season', '1000', 'g')])).toEqual([]);
  });

  it('given a new limit where there was none, it says there was no limit of that scope', () => {
    expect(tightenedLimits([], [chaga('day', '500', 'g')]).map(limitChangeLine)).toEqual(['Chaga: 500 g a day, was no limit a day']);
  });

  it("given a permit's own tighter limit beside the parcel's, it compares the smaller of the two, across units", () => {
    // 1 lb = 453.59237 g exactly (1959 agreement, REFERENCES §1): the permit's 1 lb binds under the parcel's 500 g.
    const before = [chaga('visit', '500', 'g'), chaga('visit', '1', 'lb')];
    expect(tightenedLimits(before, [chaga('visit', '450', 'g'), chaga('visit', '1', 'lb')]).map(limitChangeLine)).toEqual(['Chaga: 450 g a visit, was 1 lb a visit']);
    // The parcel's limit lowered to 460 g is still above the permit's 453.59237 g: nothing tighter for this holder.
    expect(tightenedLimits(before, [chaga('visit', '460', 'g'), chaga('visit', '1', 'lb')])).toEqual([]);
  });

  it('given a mass limit and a count limit on one species, each is compared only with its own measure', () => {
    const before = [chaga('season', '2', 'kg'), { speciesName: 'Ramps', scope: 'season' as const, quantity: '40', unit: 'plant' as const }];
    const after = [chaga('season', '2', 'kg'), { speciesName: 'Ramps', scope: 'season' as const, quantity: '30', unit: 'plant' as const }, chaga('season', '12', 'fruiting-body')];
    expect(tightenedLimits(before, after).map(limitChangeLine)).toEqual([
      'Chaga: 12 fruiting bodies a season, was no limit a season',
      'Ramps: 30 plants a season, was 40 plants a season',
    ]);
  });
});
