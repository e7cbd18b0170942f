import { describe, expect, it } from 'vitest';
import {
  formatLimit, formatLimits, formatMonthDay, formatPercent, formatQuantities, formatQuantity, formatSeasonWindow, formatSeasonWindows, stateLabel, stateSymbols, stateWords, tallyStates,
} from '../../src/lib/tally-words';

/*
 * The words every screen, report, e-mail and CSV shares. Month abbreviations are the en-US ones
 * (Jan … Dec, from memory of CLDR's en data); the symbols are the four the counting model names
 * (✓ within, ◑ nearing, ● reached, ✕ over).
 */

describe('formatSeasonWindow', () => {
  it('given American ginseng in Pennsylvania, 1 Sept – 30 Nov (REFERENCES §7 ◐), it reads "Sep 1 – Nov 30"', () => {
    expect(formatSeasonWindow({ start: '09-01', end: '11-30' })).toBe('Sep 1 – Nov 30');
  });
  it('given a window 11-15 … 02-28, whose end comes before its start, it says it crosses New Year', () => {
    expect(formatSeasonWindow({ start: '11-15', end: '02-28' })).toBe('Nov 15 – Feb 28, across New Year');
  });
  it('given a one-day window, it does not say it crosses New Year', () => {
    expect(formatSeasonWindow({ start: '06-01', end: '06-01' })).toBe('Jun 1 – Jun 1');
  });
  it('given 02-29 at either end, it reads as Feb 29 — a yearly date, not 1 March of a common year', () => {
    expect(formatSeasonWindow({ start: '02-29', end: '03-31' })).toBe('Feb 29 – Mar 31');
    expect(formatSeasonWindow({ start: '12-01', end: '02-29' })).toBe('Dec 1 – Feb 29, across New Year');
    expect(formatMonthDay('02-29')).toBe('Feb 29');
  });
  it('given a window of the whole calendar year, it reads "all year"; one day shorter, it gives its dates', () => {
    expect(formatSeasonWindow({ start: '01-01', end: '12-31' })).toBe('all year');
    expect(formatSeasonWindow({ start: '01-01', end: '12-30' })).toBe('Jan 1 – Dec 30');
  });
  it('given several windows, it joins them with "and"; given none, it says no season is set', () => {
    expect(formatSeasonWindows([{ start: '04-15', end: '05-31' }, { start: '09-01', end: '10-15' }])).toBe('Apr 15 – May 31 and Sep 1 – Oct 15');
    expect(formatSeasonWindows([])).toBe('no season set');
  });
});

describe('formatPercent', () => {
  it('given a percentage already rounded to one decimal, it writes it with a space and a percent sign', () => {
    expect(formatPercent(67.5)).toBe('67.5 %');
    expect(formatPercent(81.7)).toBe('81.7 %');
    expect(formatPercent(12.5)).toBe('12.5 %');
  });
  it('given a whole percentage, it writes no decimal (100 %, 0 %, 25 %)', () => {
    expect(formatPercent(100)).toBe('100 %');
    expect(formatPercent(0)).toBe('0 %');
    expect(formatPercent(25)).toBe('25 %');
  });
  it('given a percentage in the thousands, it groups the digits the en-US way: 1,234.5 %', () => {
    expect(formatPercent(1234.5)).toBe('1,234.5 %');
  });
});

describe('state words and symbols', () => {
  it('given each state, it writes the symbol and the word', () => {
    expect(tallyStates.map(stateLabel)).toEqual(['✓ within', '◑ nearing', '● reached', '✕ over']);
  });
  it('given the four states, each has its own symbol, so a state reads in greyscale without its colour', () => {
    expect(new Set(Object.values(stateSymbols)).size).toBe(4);
    expect(stateWords).toEqual({ within: 'within', nearing: 'nearing', reached: 'reached', over: 'over' });
  });
});

describe('formatQuantities', () => {
  it('given 150 g and 30 plants (an entry under "200 g or 50 plants", REFERENCES §7), it reads "150 g and 30 plants"', () => {
    expect(formatQuantities([{ quantity: '150', unit: 'g' }, { quantity: '30', unit: 'plant' }])).toBe('150 g and 30 plants');
  });
  it('given one quantity, it reads it alone, the unit agreeing with the amount (3 US dry quarts, 1 US dry quart, 1 plant)', () => {
    expect(formatQuantities([{ quantity: '3', unit: 'us-dry-quart' }])).toBe('3 US dry quarts');
    expect(formatQuantities([{ quantity: '1', unit: 'us-dry-quart' }])).toBe('1 US dry quart');
    expect(formatQuantities([{ quantity: '1', unit: 'plant' }])).toBe('1 plant');
  });
  it('given a correction, it shows the sign: +50 g and −100 g (a true minus sign, U+2212)', () => {
    expect(formatQuantities([{ quantity: '50', unit: 'g' }, { quantity: '-100', unit: 'g' }], { signed: true })).toBe('+50 g and \u2212100 g');
  });
  it('given thousands and long decimals, it groups digits and keeps at most three decimals for reading', () => {
    expect(formatQuantity({ quantity: '1250', unit: 'g' })).toBe('1,250 g');
    expect(formatQuantity({ quantity: '0.3333', unit: 'kg' })).toBe('0.333 kg');
  });
  it('given no quantities, it reads as nothing', () => {
    expect(formatQuantities([])).toBe('');
  });
});

describe('formatLimit', () => {
  it('given the stored "1.500000" kg a season, it reads "1.5 kg a season"', () => {
    expect(formatLimit({ quantity: '1.500000', unit: 'kg', scope: 'season' })).toBe('1.5 kg a season');
  });
  it('given 500 g a visit and 1 kg a day, it writes the scope in words', () => {
    expect(formatLimit({ quantity: '500.000000', unit: 'g', scope: 'visit' })).toBe('500 g a visit');
    expect(formatLimit({ quantity: '1', unit: 'kg', scope: 'day' })).toBe('1 kg a day');
  });
  it('given 1200 plants shared by everyone, it groups thousands and says who shares the limit', () => {
    expect(formatLimit({ quantity: '1200', unit: 'plant', scope: 'parcel-season' })).toBe('1,200 plants a season for everyone together');
  });
  it('given one plant, the unit is singular; given a club cap of 2 US liquid quarts, plural', () => {
    expect(formatLimit({ quantity: '1.000000', unit: 'plant', scope: 'day' })).toBe('1 plant a day');
    expect(formatLimit({ quantity: '2', unit: 'us-quart', scope: 'club-season' })).toBe('2 US liquid quarts a season for the whole club');
  });
  it('given a limit with six decimals, it keeps every digit rather than rounding it away', () => {
    expect(formatLimit({ quantity: '0.000250', unit: 'kg', scope: 'visit' })).toBe('0.00025 kg a visit');
  });
  it('given two limits, it joins them with "and"', () => {
    expect(formatLimits([{ quantity: '200', unit: 'g', scope: 'visit' }, { quantity: '50', unit: 'plant', scope: 'season' }])).toBe('200 g a visit and 50 plants a season');
  });
});
