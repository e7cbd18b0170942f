import { z } from 'zod';
import { methods } from './land.schemas';
import { unitCodes, type Unit } from './units';

/** A check-in as the W3C Geolocation API reports a position: degrees, and accuracy in metres (95 %). */
export const checkInSchema = z.object({
  longitude: z.number({ error: 'Send the longitude as a number.' }).min(-180, 'Longitude runs from -180 to 180.').max(180, 'Longitude runs from -180 to 180.'),
  latitude: z.number({ error: 'Send the latitude as a number.' }).min(-90, 'Latitude runs from -90 to 90.').max(90, 'Latitude runs from -90 to 90.'),
  accuracyM: z
    .number({ error: 'Send the accuracy radius in metres, as the device reports it.' })
    
    .min(0, 'The accuracy radius cannot be negative.')
    .max(5000, 'That fix is too rough to decide anything (over 5 km); wait for a better one.'),
});

const quantity = z
  .union([z.string(), z.number()])
  .transform((v) => String(v).trim())
  .refine((v) => /^-?\d+(\.\d{1,6})?$/.test(v), 'Enter a number, like 250 or 1.5 (at most 6 decimals).')
  .refine((v) => Number(v) !== 0, 'Enter how much you took.')
  .refine((v) => Math.abs(Number(v)) < 1e7, 'That quantity is too large.');

export const harvestSchema = z
  .object({
    /** The client's key for this entry; sending it again returns the first result. */
    idempotencyKey: z.string().min(8, 'Send an idempotency key of at least 8 characters.').max(100),
    visitId: z.uuid('Check in first: the entry belongs to a visit.'),
    speciesId: z.uuid('Choose a species.'),
    method: z.enum(methods, 'Choose how you took it.'),
    quantity,
    unit: z.enum(unitCodes as [Unit, ...Unit[]], { error: (issue) => `Unknown unit "${String(issue.input)}"; use one of ${unitCodes.join(', ')}.` }),
    photoUploadId: z.uuid().optional(),
    /** Required to record an entry that takes a limit over; it is then flagged as a breach. */
    acknowledgeOver: z.boolean().default(false),
    /** A correction of an earlier entry, with the reason; its quantity is signed. */
    corrects: z.object({ entryId: z.uuid(), reason: z.string().trim().min(3, 'Say why you correct the entry.').max(500) }).optional(),
  })
  .refine((h) => h.corrects || !h.quantity.startsWith('-'), { path: ['quantity'], message: 'A quantity cannot be negative; to reverse an entry, record a correction.' });

export type HarvestInput = z.infer<typeof harvestSchema>;
