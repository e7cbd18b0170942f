import { sql } from 'drizzle-orm';
import { boolean, check, date, doublePrecision, index, integer, numeric, pgTable, primaryKey, text, uniqueIndex, uuid, type AnyPgColumn } from 'drizzle-orm/pg-core';
import { at, createdAt, id, point } from './columns';
import { measureEnum, methodEnum, positionSourceEnum, unitEnum, verdictEnum, visitEndEnum } from './enums';
import { clubs } from './clubs';
import { users } from './auth';
import { parcels } from './land';
import { permits } from './permits';
import { species } from './species';
import { uploads } from './system';

/**
 * A visit runs from a check-in to a check-out on one parcel, within one parcel-local day (it ends at
 * local midnight at the latest), under the permit the check-in found. A forager has at most one
 * open visit (a unique index on the open ones).
 */
export const visits = pgTable(
  'visits',
  {
    id: id(),
    foragerId: text('forager_id').notNull().references(() => users.id),
    parcelId: uuid('parcel_id').notNull().references(() => parcels.id),
    permitId: uuid('permit_id').references(() => permits.id),
    /** The parcel-local calendar day the visit began on. */
    localDate: date('local_date', { mode: 'string' }).notNull(),
    startedAt: at('started_at').notNull().defaultNow(),
    endedAt: at('ended_at'),
    endedBy: visitEndEnum('ended_by'),
  },
  (t) => [
    index('visits_forager').on(t.foragerId, t.startedAt),
    index('visits_parcel').on(t.parcelId, t.localDate),
    /** One open visit per forager; open visits are few, so closing them at the end of the day reads only these. */
    uniqueIndex('visits_one_open').on(t.foragerId).where(sql`${t.endedAt} is null`),
  ],
);

/** Every "I am here", whatever the verdict; a check-in that allows harvest opens a visit. */
export const checkIns = pgTable(
  'check_ins',
  {
    id: id(),
    foragerId: text('forager_id').notNull().references(() => users.id),
    position: point('position').notNull(),
    /** Metres at 95 % confidence, as the W3C Geolocation API reports `coords.accuracy`. */
    accuracyM: doublePrecision('accuracy_m').notNull(),
    verdict: verdictEnum('verdict').notNull(),
    parcelId: uuid('parcel_id').references(() => parcels.id),
    visitId: uuid('visit_id').references(() => visits.id),
    /** When the forager was there: the server's instant online, the device's `recordedAt` for one synced from the device. */
    at: at('at').notNull().defaultNow(),
    /** The device's clock when it was recorded offline; null for a check-in made online. */
    deviceRecordedAt: at('device_recorded_at'),
    /** When the server received it. */
    receivedAt: at('received_at').notNull().defaultNow(),
    positionSource: positionSourceEnum('position_source').notNull().default('gps'),
    /** The device's key for a check-in synced from its queue: sending it again returns the first result. Unique per forager. */
    idempotencyKey: text('idempotency_key'),
    /** SHA-256 of what was sent with the key (src/server/field/harvest.ts, requestHashOf). */
    requestHash: text('request_hash'),
  },
  (t) => [
    index('check_ins_forager').on(t.foragerId, t.at),
    index('check_ins_visit').on(t.visitId),
    uniqueIndex('check_ins_forager_key').on(t.foragerId, t.idempotencyKey),
    check('check_ins_accuracy', sql`${t.accuracyM} >= 0`),
  ],
);

/**
 * The ledger. Append-only: a trigger refuses UPDATE, DELETE and TRUNCATE. A correction is a new
 * entry that references the one it corrects, with a reason; its quantities are signed (negative to
 * take away). What the counting needs is decided when the entry is written and stored on it: the
 * local day, visit, permit (and its club) and season occurrence it counts in. A correction counts
 * where the root of its chain counted, so every reader only adds up stored facts.
 */
export const harvestEntries = pgTable(
  'harvest_entries',
  {
    id: id(),
    /** The forager's key for this entry: sending it again returns the first result. Unique per forager. */
    idempotencyKey: text('idempotency_key').notNull(),
    /** SHA-256 of what was asked with the key, so the key sent with something else is refused; null on entries older than it. */
    requestHash: text('request_hash'),
    foragerId: text('forager_id').notNull().references(() => users.id),
    parcelId: uuid('parcel_id').notNull().references(() => parcels.id),
    /** The permit it counts under: the visit's permit (for a correction, the root entry's). */
    permitId: uuid('permit_id').references(() => permits.id),
    /** The club holding that permit, when it is a club's. */
    clubId: uuid('club_id').references(() => clubs.id),
    /** The visit it was recorded in; null for a correction made away from the parcel. */
    visitId: uuid('visit_id').references(() => visits.id),
    speciesId: uuid('species_id').notNull().references(() => species.id),
    method: methodEnum('method').notNull(),
    /** The parcel-local date on which it was recorded. */
    localDate: date('local_date', { mode: 'string' }).notNull(),
    /** The parcel-local day it counts on: its own, or for a correction its root entry's. */
    countedOn: date('counted_on', { mode: 'string' }).notNull(),
    /** The visit it counts in: its own, or for a correction its root entry's. */
    countedVisitId: uuid('counted_visit_id').references(() => visits.id),
    /** The season occurrence (both ends included) of its allowance that it counts in, as the field engine found it. */
    seasonStart: date('season_start', { mode: 'string' }).notNull(),
    seasonEnd: date('season_end', { mode: 'string' }).notNull(),
    position: point('position'),
    photoUploadId: uuid('photo_upload_id').references(() => uploads.id),
    /** Metres from the check-in to where the photo's metadata places it; null without a GPS tag. */
    photoDistanceM: doublePrecision('photo_distance_m'),
    breach: boolean('breach').notNull().default(false),
    acknowledgedOver: boolean('acknowledged_over').notNull().default(false),
    correctsEntryId: uuid('corrects_entry_id').references((): AnyPgColumn => harvestEntries.id),
    /** The first entry of the correction chain this one belongs to; null for an entry that corrects nothing. */
    rootEntryId: uuid('root_entry_id').references((): AnyPgColumn => harvestEntries.id),
    correctionReason: text('correction_reason'),
    recordedBy: text('recorded_by').notNull().references(() => users.id),
    /** When the server received it (for an entry synced from a device's queue, later than `deviceRecordedAt`). */
    recordedAt: createdAt(),
    /** The device's clock when it was recorded offline; null for an entry recorded online. */
    deviceRecordedAt: at('device_recorded_at'),
  },
  (t) => [
    index('harvest_entries_parcel_species').on(t.parcelId, t.speciesId, t.localDate),
    index('harvest_entries_forager').on(t.foragerId, t.recordedAt),
    index('harvest_entries_permit').on(t.permitId),
    index('harvest_entries_visit').on(t.visitId),
    uniqueIndex('harvest_entries_forager_key').on(t.foragerId, t.idempotencyKey),
    /** Deleting a visit (never done by the app, but by clean-ups) checks this reference; without it, by reading every entry. */
    index('harvest_entries_counted_visit').on(t.countedVisitId).where(sql`${t.countedVisitId} is not null`),
    /** Corrections are few: finding an entry's corrections reads only these. */
    index('harvest_entries_corrects').on(t.correctsEntryId).where(sql`${t.correctsEntryId} is not null`),
    index('harvest_entries_root').on(t.rootEntryId).where(sql`${t.rootEntryId} is not null`),
    check('harvest_entries_correction_reason', sql`${t.correctsEntryId} is null or ${t.correctionReason} is not null`),
    check('harvest_entries_root_of_correction', sql`(${t.correctsEntryId} is null) = (${t.rootEntryId} is null)`),
    check('harvest_entries_season_order', sql`${t.seasonEnd} >= ${t.seasonStart}`),
  ],
);

/**
 * The quantities of an entry, one per measure: an allowance may limit a species in more than one
 * ("200 g or 50 plants, whichever comes first"), and an entry then gives each. Append-only like the
 * ledger. Base quantities are exact: a 6-decimal quantity times a 10-decimal NIST factor has at most
 * 16 decimals.
 */
export const harvestQuantities = pgTable(
  'harvest_quantities',
  {
    entryId: uuid('entry_id').notNull().references(() => harvestEntries.id),
    measure: measureEnum('measure').notNull(),
    /** Signed for a correction. */
    quantity: numeric('quantity', { precision: 18, scale: 6, mode: 'string' }).notNull(),
    unit: unitEnum('unit').notNull(),
    /** The quantity in the measure's base unit (g, mL, or items). */
    baseQuantity: numeric('base_quantity', { precision: 36, scale: 16, mode: 'string' }).notNull(),
  },
  (t) => [
    primaryKey({ columns: [t.entryId, t.measure], name: 'harvest_quantities_pkey' }),
    check('harvest_quantities_not_zero', sql`${t.quantity} <> 0`),
    /** unit_measure (drizzle/0010) says what each unit measures, as src/lib/units.ts does. */
    check('harvest_quantities_unit_measure', sql`unit_measure(${t.unit}) = ${t.measure}`),
  ],
);

/**
 * The ledger summed as the limits count it, kept by a trigger on each new quantity (drizzle/0011):
 * one row per parcel, species, measure, season occurrence, forager, local day, visit and permit,
 * from the facts stored on each entry. Each row also carries its forager's whole total of that day
 * (under any permit), of that day under its own permit, and its visit's, so an audit finds the
 * busiest day and visit with one MAX, with no second grouping. Derived: rebuilt from the ledger at
 * will. Its unique key (NULLS NOT DISTINCT, the sums included for index-only scans) is made in that
 * migration: drizzle's index builder has neither.
 */
export const harvestTotals = pgTable(
  'harvest_totals',
  {
    parcelId: uuid('parcel_id').notNull().references(() => parcels.id),
    speciesId: uuid('species_id').notNull().references(() => species.id),
    measure: measureEnum('measure').notNull(),
    seasonStart: date('season_start', { mode: 'string' }).notNull(),
    seasonEnd: date('season_end', { mode: 'string' }).notNull(),
    foragerId: text('forager_id').notNull().references(() => users.id),
    countedOn: date('counted_on', { mode: 'string' }).notNull(),
    visitId: uuid('visit_id').references(() => visits.id),
    permitId: uuid('permit_id').references(() => permits.id),
    clubId: uuid('club_id').references(() => clubs.id),
    /** Base units (g, mL, or items) of this row's entries. */
    total: numeric('total', { mode: 'string' }).notNull(),
    /** Base units of the forager's rows of this parcel, species, measure and day, under any permit. */
    dayTotal: numeric('day_total', { mode: 'string' }).notNull(),
    /** The same, under this row's permit only: what a club's audit may show of a member's day. */
    permitDayTotal: numeric('permit_day_total', { mode: 'string' }).notNull(),
    /** Base units of every row of this visit, species and measure; null without a visit. */
    visitTotal: numeric('visit_total', { mode: 'string' }),
    /** Entries that add (corrections are not counted), and breaches. */
    entries: integer('entries').notNull(),
    breaches: integer('breaches').notNull(),
  },
  (t) => [
    /** A forager's own rows: their day's totals as each entry is added, their ledger's totals and their check-in's sums. */
    index('harvest_totals_forager').on(t.foragerId, t.parcelId, t.speciesId, t.measure, t.countedOn),
    index('harvest_totals_visit').on(t.visitId).where(sql`${t.visitId} is not null`),
  ],
);

/** The parcels with anything in the ledger, kept by the same trigger: an audit skips the rest without reading the totals. */
export const harvestedParcels = pgTable('harvested_parcels', {
  parcelId: uuid('parcel_id').primaryKey().references(() => parcels.id),
});

export type Visit = typeof visits.$inferSelect;
export type CheckIn = typeof checkIns.$inferSelect;
export type HarvestEntry = typeof harvestEntries.$inferSelect;
export type NewHarvestEntry = typeof harvestEntries.$inferInsert;
export type HarvestQuantity = typeof harvestQuantities.$inferSelect;
