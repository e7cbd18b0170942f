import { z } from 'zod';
import { emailAddress } from './accounts.schemas';
import { limitSchema } from './land.schemas';
import { isoDate, wholeNumber } from './schema-parts';


/** A permit's own, tighter limit on one species, or (club permits) a club-wide season cap. */
export const permitLimitSchema = z.object({
  speciesId: z.uuid('Choose a species the parcel allows.'),
  scope: z.enum(['visit', 'day', 'season', 'parcel-season', 'club-season']),
  quantity: limitSchema.shape.quantity,
  unit: limitSchema.shape.unit,
});

const dateRange = { startsOn: isoDate, endsOn: isoDate };
const endsAfterStart = { path: ['endsOn'], message: 'The permit must end on or after the day it starts.' };

export const grantPermitSchema = z
  .object({
    holder: z.discriminatedUnion('kind', [
      z.object({ kind: z.literal('forager'), email: emailAddress }),
      z.object({ kind: z.literal('club'), clubId: z.uuid('Choose a club.') }),
    ]),
    ...dateRange,
    /** Integer minor units (cents); 0 or absent is no fee. */
    feeMinor: wholeNumber(z.number({ error: 'Give the fee in whole cents.' }).int('Give the fee in whole cents.').min(0, 'A fee cannot be negative.').max(10_000_000)).default(0),
    currency: z.string().regex(/^[a-z]{3}$/, 'Use a three-letter currency code like usd.').default('usd'),
    limits: z.array(permitLimitSchema).max(50).default([]),
    note: z.string().trim().max(1000).default(''),
  })
  .refine((p) => p.endsOn >= p.startsOn, endsAfterStart);

export const accessRequestSchema = z
  .object({
    parcelId: z.uuid('Choose a parcel.'),
    /** A steward may ask on behalf of their club. */
    clubId: z.preprocess((v) => (v === '' || v === null ? undefined : v), z.uuid('Choose a club you steward.').optional()),
    ...dateRange,
    note: z.string().trim().min(1, 'Tell the landowner what you would like to harvest and when.').max(1000),
  })
  .refine((p) => p.endsOn >= p.startsOn, endsAfterStart);

export const decisionSchema = z.object({
  decision: z.enum(['approve', 'decline'], 'Choose approve or decline.'),
  message: z.string().trim().max(1000).default(''),
  /** Approving may set or change the fee (cents). */
  feeMinor: wholeNumber(z.number({ error: 'Give the fee in whole cents.' }).int('Give the fee in whole cents.').min(0, 'A fee cannot be negative.').max(10_000_000)).optional(),
});

export const revokeSchema = z.object({ reason: z.string().trim().min(1, 'Say why the permit is revoked; the holder is told.').max(1000) });

export type GrantPermitInput = z.infer<typeof grantPermitSchema>;
export type AccessRequestInput = z.infer<typeof accessRequestSchema>;
