import { z } from 'zod';
import { describe, expect, it } from 'vitest';
import { isoDate, wholeNumber } from '../../src/lib/schema-parts';

describe('isoDate', () => {
  // The proleptic Gregorian calendar of ISO 8601: February has 28 days, 29 in leap years (divisible by 4, except centuries not divisible by 400).
  it.each(['2026-02-28', '2028-02-29', '2000-02-29', '2026-12-31'])('given %s, a real day, it accepts it', (day) => {
    expect(isoDate.safeParse(day).success).toBe(true);
  });
  it.each(['2026-02-30', '2026-02-29', '1900-02-29', '2026-04-31', '2026-13-01', '2026-00-10', '2026-1-5', '20260105'])('given %s, it refuses it', (day) => {
    expect(isoDate.safeParse(day).success).toBe(false);
  });
});

describe('wholeNumber', () => {
  const percent = wholeNumber(z.number().int().min(1).max(100));
  it.each([[50, 50], ['50', 50], [' 7 ', 7]] as const)('given %j (a number, or the digits a form field holds), it reads %i', (value, read) => {
    expect(percent.parse(value)).toBe(read);
  });
  it.each([true, false, null, '', [50], '1e3', '5.5', 5.5, '0x10', {}])('given %j, it refuses it rather than reading 0 or 1', (value) => {
    expect(percent.safeParse(value).success).toBe(false);
  });
});
