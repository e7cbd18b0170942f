import { z } from 'zod';
import { emailAddress } from './accounts.schemas';
import { limitSchema } from './land.schemas';
import { parseMoneyAmount } from './money';
import { isoDate, wholeNumber } from './schema-parts';


/** A permit's own, tighter limit on one species, or (club permits) a club-wide season cap. */
export const permitLimitSchema = z.object({
  speciesId: z.uuid('Choose a species the parcel allows.'),
  scope: z.enum(['visit', 'day', 'season', 'parcel-season', 'club-season'], 'Choose a visit, a day, a season, everyone together or the whole club.'),
  quantity: limitSchema.shape.quantity,
  unit: limitSchema.shape.unit,
});

const dateRange = { startsOn: isoDate, endsOn: isoDate };

/** Integer minor units (cents), as the API has always taken a fee. */
const feeMinor = wholeNumber(z.number({ error: 'Give the fee in whole cents.' }).int('Give the fee in whole cents.').min(0, 'A fee cannot be negative.').max(10_000_000, 'That fee is too large; the most Tallywood takes is $100,000.00.'));
/** The fee as a person writes it, in the currency ("12.50" dollars); read exactly by parseMoneyAmount. */
const feeText = z.string({ error: 'Enter the fee in dollars, like 12.50 (or 0 for no fee).' }).max(40, 'Enter the fee in dollars, like 12.50 (or 0 for no fee).');

/**
 * A fee given either way: `fee` ("12.50", in the currency) or `feeMinor` (1250, in cents). The
 * output has `feeMinor` only; a `fee` that is not an amount is an issue on `fee`, beside its field.
 */
function settleFee<T extends { fee?: string; feeMinor?: number; currency?: string }>(input: T, ctx: z.RefinementCtx) {
  const { fee, ...rest } = input;
  if (fee === undefined) return rest;
  const parsed = parseMoneyAmount(fee, input.currency ?? 'usd');
  if (!parsed.ok) {
    ctx.addIssue({ code: 'custom', path: ['fee'], message: parsed.message });
    return z.NEVER;
  }
  if (input.feeMinor !== undefined && input.feeMinor !== parsed.minor) {
    ctx.addIssue({ code: 'custom', path: ['fee'], message: 'Send the fee once: as fee (in dollars) or as feeMinor (in cents).' });
    return z.NEVER;
  }
  return { ...rest, feeMinor: parsed.minor };
}
const endsAfterStart = { path: ['endsOn'], message: 'The permit must end on or after the day it starts.' };

export const grantPermitSchema = z
  .object({
    holder: z.discriminatedUnion('kind', [
      z.object({ kind: z.literal('forager'), email: emailAddress }),
      z.object({ kind: z.literal('club'), clubId: z.uuid('Choose a club.') }),
    ]),
    ...dateRange,
    /** The fee in the currency, as typed ("12.50"); or `feeMinor`. Empty, 0 or absent is no fee. */
    fee: feeText.optional(),
    /** Integer minor units (cents); 0 or absent is no fee. */
    feeMinor: feeMinor.optional(),
    currency: z.string().regex(/^[a-z]{3}$/, 'Use a three-letter currency code like usd.').default('usd'),
    limits: z.array(permitLimitSchema).max(50, 'Give at most 50 limits.').default([]),
    note: z.string().trim().max(1000, 'Keep the note to 1 000 characters or fewer.').default(''),
  })
  .refine((p) => p.endsOn >= p.startsOn, endsAfterStart)
  .transform((p, ctx) => {
    const settled = settleFee(p, ctx);
    return { ...settled, feeMinor: settled.feeMinor ?? 0 };
  });

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
  message: z.string().trim().max(1000, 'Keep the message to 1 000 characters or fewer.').default(''),
  /** Approving may set or change the fee: `fee` in the currency ("12.50") or `feeMinor` in cents. */
  fee: feeText.optional(),
  feeMinor: feeMinor.optional(),
}).transform((d, ctx) => settleFee(d, ctx));

export const revokeSchema = z.object({ reason: z.string().trim().min(1, 'Say why the permit is revoked; the holder is told.').max(1000) });

export type GrantPermitInput = z.infer<typeof grantPermitSchema>;
export type AccessRequestInput = z.infer<typeof accessRequestSchema>;
