import { z } from 'zod';

/**
 * A calendar date as ISO 8601 writes it (YYYY-MM-DD) that exists: 2026-02-30 is refused here, with
 * the field named, rather than by the database.
 */
export const isoDate = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, 'Use a date like 2026-11-14.')
  .refine((s) => {
    const day = new Date(`${s}T00:00:00Z`);
    return !Number.isNaN(day.getTime()) && day.toISOString().startsWith(s);
  }, 'That date does not exist.');

/**
 * A whole number sent as a JSON number or as the digits a form field holds ("50", " 7 "); nothing
 * else: no booleans, empty strings, arrays or exponents, which a plain coercion would turn into 0 or 1.
 */
export const wholeNumber = <T extends z.ZodNumber>(number: T) =>
  z.preprocess((value) => (typeof value === 'string' && /^\s*-?\d+\s*$/.test(value) ? Number(value) : value), number);
