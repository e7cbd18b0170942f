import { z } from 'zod';
import { methods } from './land.schemas';
import { measureOf, measures, unitCodes, type Unit } from './units';

/** A check-in as the W3C Geolocation API reports a position: degrees, and accuracy in metres (95 %). */
export const checkInSchema = z.object({
  longitude: z.number({ error: 'Send the longitude as a number.' }).min(-180, 'Longitude runs from -180 to 180.').max(180, 'Longitude runs from -180 to 180.'),
  latitude: z.number({ error: 'Send the latitude as a number.' }).min(-90, 'Latitude runs from -90 to 90.').max(90, 'Latitude runs from -90 to 90.'),
  accuracyM: z
    .number({ error: 'Send the accuracy radius in metres, as the device reports it.' })
    
    .min(0, 'The accuracy radius cannot be negative.')
    .max(5000, 'That fix is too rough to decide anything (over 5 km); wait for a better one.'),
  /** Where the position came from: the device's fix, or a point tapped on the map. */
  source: z.enum(['gps', 'tap'], "Say where the position came from: 'gps' for the device's fix, 'tap' for a point chosen on the map.").default('gps'),
});

const quantityText = z
  .union([z.string(), z.number()])
  .transform((v) => String(v).trim())
  .refine((v) => /^-?\d+(\.\d{1,6})?$/.test(v), 'Enter a number, like 250 or 1.5 (at most 6 decimals).')
  .refine((v) => Number(v) !== 0, 'Enter how much you took.')
  .refine((v) => Math.abs(Number(v)) < 1e7, 'That quantity is too large.');

const unit = z.enum(unitCodes as [Unit, ...Unit[]], { error: (issue) => `Unknown unit "${String(issue.input)}"; use one of ${unitCodes.join(', ')}.` });

/** One measure of an entry: an allowance limiting "200 g or 50 plants" asks for both. */
const quantities = (quantity: z.ZodType<string, unknown>) =>
  z
    .array(z.object({ quantity, unit }), 'Send the quantities as a list of { quantity, unit }.')
    .min(1, 'Enter how much you took.')
    .max(measures.length, 'Give each kind of quantity once.')
    .refine((qs) => new Set(qs.map((q) => measureOf(q.unit))).size === qs.length, 'Give each kind of quantity (weight, volume, or a count) once.');

const idempotencyKey = z.string().min(8, 'Send an idempotency key of at least 8 characters.').max(100);

/** Whose records a synced batch holds: the account signed in when they were recorded on the device. */
const foragerId = z.string("Name the forager who recorded these (foragerId).").min(1, 'Name the forager who recorded these (foragerId).').max(100);

export const harvestSchema = z.object({
  /** The client's key for this entry; sending it again returns the first result. */
  idempotencyKey,
  visitId: z.uuid('Check in first: the entry belongs to a visit.'),
  speciesId: z.uuid('Choose a species.'),
  method: z.enum(methods, 'Choose how you took it.'),
  quantities: quantities(quantityText.refine((v) => !v.startsWith('-'), 'A quantity cannot be negative; to reverse an entry, correct it from My ledger.')),
  photoUploadId: z.uuid().optional(),
  /** Required to record an entry that takes a limit over; it is then flagged as a breach. */
  acknowledgeOver: z.boolean().default(false),
});

/**
 * A correction of one of your entries: signed quantities (negative to take away) in the entry's
 * own measures, and why. It counts where the entry's chain began: that day, visit and permit.
 */
export const correctionSchema = z.object({
  idempotencyKey,
  reason: z.string().trim().min(3, 'Say why you correct the entry.').max(500, 'Keep the reason to 500 characters or fewer.'),
  quantities: quantities(quantityText),
  acknowledgeOver: z.boolean().default(false),
});

/** An instant with its offset (RFC 3339), as a device's clock gives it. */
const instant = (what: string) =>
  z.iso.datetime({ offset: true, error: `Send ${what} as an ISO 8601 instant with its offset, like 2026-07-15T14:30:00Z.` }).transform((v) => new Date(v));

const syncPosition = checkInSchema.extend({ source: z.enum(['gps', 'tap'], "Say where the position came from: 'gps' for the device's fix, 'tap' for a point chosen on the map.") });

const syncCheckIn = z.object({
  kind: z.literal('check-in'),
  idempotencyKey,
  recordedAt: instant('when it was recorded'),
  position: syncPosition,
});

const syncEntry = z.object({
  kind: z.literal('entry'),
  idempotencyKey,
  recordedAt: instant('when it was recorded'),
  /** Where it was recorded. */
  position: syncPosition,
  parcelId: z.uuid('Name the parcel the entry was recorded on by its id, as in the field pack.'),
  speciesId: z.uuid('Choose a species.'),
  method: z.enum(methods, 'Choose how you took it.'),
  quantities: quantities(quantityText.refine((v) => !v.startsWith('-'), 'A quantity cannot be negative; to reverse an entry, correct it from My ledger.')),
  /** Whether the forager confirmed on the device that the entry goes over a limit. */
  acknowledgeOver: z.boolean('Say whether going over was confirmed on the device (true or false).'),
});

export const syncItemSchema = z.discriminatedUnion('kind', [syncCheckIn, syncEntry], { error: "Each item is a 'check-in' or an 'entry'." });

const itemList = <T extends z.ZodType<{ idempotencyKey: string }>>(item: T) =>
  z
    .array(item, 'Send the items as a list.')
    .min(1, 'Send at least one item.')
    .max(50, 'Send at most 50 items at a time; send the rest in another request.')
    .refine((items) => new Set(items.map((i) => i.idempotencyKey)).size === items.length, 'Each item needs its own idempotency key; two items here share one.');

/**
 * What a device recorded offline, sent when the connection returns: up to 50 check-ins and entries
 * in the order they were recorded, with the instant its field pack was downloaded. (The API document
 * shows this; the endpoint reads the list with `fieldSyncEnvelopeSchema` and each item on its own.)
 */
export const fieldSyncSchema = z.object({ foragerId, packAsOf: instant('when the field pack was downloaded'), items: itemList(syncItemSchema) });

/**
 * The batch as the endpoint reads it first: a wrong list is a 400 for the whole body, but an item
 * that names its kind and key and is malformed otherwise is refused on its own (`parseSyncItems`), so
 * one bad item in a device's queue does not hold back the rest.
 */
export const fieldSyncEnvelopeSchema = z.object({
  foragerId,
  packAsOf: instant('when the field pack was downloaded'),
  items: itemList(z.looseObject({ kind: z.enum(['check-in', 'entry'], "Each item is a 'check-in' or an 'entry'."), idempotencyKey })),
});

export type SyncItemRead = { ok: true; item: SyncItem } | { ok: false; idempotencyKey: string; kind: SyncItem['kind']; message: string };

/** Each item of a read batch, parsed on its own: a malformed one carries the sentence that says what is wrong. */
export function parseSyncItems(items: z.infer<typeof fieldSyncEnvelopeSchema>['items']): SyncItemRead[] {
  return items.map((raw) => {
    const parsed = syncItemSchema.safeParse(raw);
    if (parsed.success) return { ok: true, item: parsed.data };
    const issue = parsed.error.issues[0];
    const where = issue?.path.length ? ` (${issue.path.join('.')})` : '';
    return { ok: false, idempotencyKey: raw.idempotencyKey, kind: raw.kind, message: `This was not saved${where}: ${issue?.message ?? 'it could not be read.'}` };
  });
}

export type HarvestInput = z.infer<typeof harvestSchema>;
export type FieldSyncInput = z.infer<typeof fieldSyncSchema>;
export type SyncItem = z.infer<typeof syncItemSchema>;
export type CorrectionInput = z.infer<typeof correctionSchema>;
