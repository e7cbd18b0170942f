import { z } from 'zod';
import { isUuid } from './ids';

/** The query string of GET /api/ledger and /api/ledger/export.csv, for the ledger's filters. */

const isoDate = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, 'Use a date like 2026-11-14.')
  .refine((s) => !Number.isNaN(Date.parse(`${s}T00:00:00Z`)), 'That date does not exist.');

/** An empty value means "any". */
export const ledgerFiltersSchema = z
  .object({
    parcelId: z.string().refine(isUuid, 'Choose a parcel from the list.').optional(),
    speciesId: z.string().refine(isUuid, 'Choose a species from the list.').optional(),
    from: isoDate.optional(),
    to: isoDate.optional(),
    seasonYear: z.coerce.number('Give a year like 2026.').int('Give a year like 2026.').min(1900, 'Give a year like 2026.').max(9999, 'Give a year like 2026.').optional(),
  })
  .refine((f) => !f.from || !f.to || f.from <= f.to, { message: 'The first date must not be after the last.', path: ['to'] });
