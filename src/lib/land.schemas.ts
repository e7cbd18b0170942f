import { z } from 'zod';
import { isTimeZone } from './local-time';
import { isoDate, wholeNumber } from './schema-parts';
import { unitCodes, units, type Unit } from './units';

/** One set of schemas for the land forms and the API that receives them (see /api/openapi.json). */
export const methods = ['cut', 'pick', 'dig', 'strip', 'gather-fallen'] as const;
export const hazardKinds = ['hunting', 'terrain', 'ticks', 'water', 'wildlife', 'other'] as const;
/** Per-forager and parcel-wide scopes; `club-season` belongs to a club permit. */
export const parcelLimitScopes = ['visit', 'day', 'season', 'parcel-season'] as const;

const position = z.array(z.number()).min(2);
export const boundaryGeometry = z.discriminatedUnion('type', [
  z.object({ type: z.literal('Polygon'), coordinates: z.array(z.array(position)) }),
  z.object({ type: z.literal('MultiPolygon'), coordinates: z.array(z.array(z.array(position))) }),
], { error: 'The boundary must be a GeoJSON Polygon or MultiPolygon.' });
export type BoundaryGeometry = z.infer<typeof boundaryGeometry>;


const daysInMonth = [31, 29, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];
export const monthDay = z
  .string()
  .regex(/^\d{2}-\d{2}$/, 'Use month-day like 09-01.')
  .refine((s) => {
    const [m, d] = s.split('-').map(Number);
    return m !== undefined && d !== undefined && m >= 1 && m <= 12 && d >= 1 && d <= (daysInMonth[m - 1] ?? 0);
  }, 'That month-day does not exist.');

const settingsFields = {
  name: z.string().trim().min(1, 'Give the parcel a name.').max(120, 'Keep the name to 120 characters or fewer.'),
  description: z.string().trim().max(2000, 'Keep the description to 2 000 characters or fewer.'),
  timeZone: z.string().trim().refine(isTimeZone, 'That is not an IANA time zone (for example America/New_York).'),
  nearingThresholdPercent: wholeNumber(z.number({ error: 'Use a whole percentage.' }).int('Use a whole percentage.').min(1, 'Use a percentage from 1 to 100.').max(100, 'Use a percentage from 1 to 100.')),
  openToRequests: z.boolean(),
};

export const parcelSettingsSchema = z.object({
  ...settingsFields,
  description: settingsFields.description.default(''),
  openToRequests: settingsFields.openToRequests.default(false),
});

export const newParcelSchema = parcelSettingsSchema.extend({ boundary: boundaryGeometry });
/** Only the fields sent change: no defaults here, so a boundary edit keeps the description. */
export const parcelUpdateSchema = z.object(settingsFields).partial().extend({
  boundary: boundaryGeometry.optional(),
  /** A draft becomes listed (visible to foragers) only for a verified landowner. */
  status: z.enum(['draft', 'listed', 'archived']).optional(),
}).refine((patch) => Object.values(patch).some((value) => value !== undefined), {
  path: ['body'],
  message: 'Send at least one field to change: name, description, boundary, status or another setting.',
});

export const closureSchema = z
  .object({ startsOn: isoDate, endsOn: isoDate, reason: z.string().trim().min(1, 'Say why the parcel is closed.').max(200, 'Keep the reason to 200 characters or fewer.') })
  .refine((c) => c.endsOn >= c.startsOn, { path: ['endsOn'], message: 'The closure must end on or after the day it starts.' });

export const hazardSchema = z.object({
  kind: z.enum(hazardKinds, 'Choose a kind of hazard.'),
  title: z.string().trim().min(1, 'Name the hazard.').max(120, 'Keep the title to 120 characters or fewer.'),
  detail: z.string().trim().max(1000, 'Keep the detail to 1 000 characters or fewer.').default(''),
});

export const termsSchema = z.object({ body: z.string().trim().min(20, 'Terms need at least a sentence (20 characters).').max(20_000, 'Keep the terms to 20 000 characters or fewer.') });

export const zoneSchema = z.object({
  name: z.string().trim().min(1, 'Name the zone.').max(120, 'Keep the name to 120 characters or fewer.'),
  reason: z.string().trim().max(500, 'Keep the reason to 500 characters or fewer.').default(''),
  boundary: boundaryGeometry,
});

const quantity = z
  .union([z.string(), z.number()])
  .transform((v) => String(v).trim())
  .refine((v) => /^-?\d+(\.\d+)?$/.test(v), 'Enter a number, like 500 or 1.5.')
  .refine((v) => !v.startsWith('-') && Number(v) > 0, 'A limit must be more than zero.')
  .refine((v) => !/\.\d{7,}$/.test(v), 'Use at most 6 decimal places.')
  .refine((v) => Number(v) < 1e9, 'That limit is too large.');

export const limitSchema = z.object({
  scope: z.enum(parcelLimitScopes, 'Choose per visit, per day, per season or parcel-wide.'),
  quantity,
  unit: z.enum(unitCodes as [Unit, ...Unit[]], { error: (issue) => `Unknown unit "${String(issue.input)}"; use one of ${unitCodes.join(', ')}.` }),
});

export const allowanceSchema = z
  .object({
    speciesId: z.uuid('Choose a species from the catalogue.'),
    seasons: z.array(z.object({ start: monthDay, end: monthDay })).min(1, 'Give at least one season window.').max(4, 'Give at most four season windows.'),
    methods: z.array(z.enum(methods, 'Choose methods from cut, pick, dig, strip and gather-fallen.')).min(1, 'Allow at least one method.'),
    /** Up to two kinds of quantity per species ("200 g or 50 plants, whichever comes first"), each scope once per kind. */
    limits: z.array(limitSchema).max(8, 'Give at most eight limits.'),
  })
  .superRefine((a, ctx) => {
    const keys = a.limits.map((l) => `${l.scope}|${units[l.unit].measure}`);
    if (new Set(keys).size !== keys.length) ctx.addIssue({ code: 'custom', path: ['limits'], message: 'Give each limit once per kind of quantity: one per visit, one per day and so on.' });
    const kinds = new Set(a.limits.map((l) => units[l.unit].measure));
    if (kinds.size > 2) ctx.addIssue({ code: 'custom', path: ['limits'], message: 'Limit a species in at most two kinds of quantity (for example a weight and a number of plants).' });
  });

export type ParcelSettings = z.infer<typeof parcelSettingsSchema>;
export type AllowanceInput = z.infer<typeof allowanceSchema>;
