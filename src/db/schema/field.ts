import { sql } from 'drizzle-orm';
import { boolean, check, date, doublePrecision, index, integer, numeric, pgTable, text, uuid, type AnyPgColumn } from 'drizzle-orm/pg-core';
import { at, createdAt, id, point } from './columns';
import { dimensionEnum, methodEnum, unitEnum, verdictEnum, visitEndEnum } from './enums';
import { users } from './auth';
import { parcels } from './land';
import { permits } from './permits';
import { species } from './species';
import { uploads } from './system';

/** A visit runs from a check-in to a check-out on one parcel (or the end of the local day). */
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
    /** Open visits are few: closing them at the end of the day reads only these. */
    index('visits_open').on(t.foragerId).where(sql`${t.endedAt} is null`),
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
    at: at('at').notNull().defaultNow(),
  },
  (t) => [index('check_ins_forager').on(t.foragerId, t.at), index('check_ins_visit').on(t.visitId), check('check_ins_accuracy', sql`${t.accuracyM} >= 0`)],
);

/**
 * The ledger. Append-only: a trigger refuses UPDATE and DELETE. A correction is a new entry that
 * references the one it corrects, with a reason; its quantity is signed (negative to reverse).
 */
export const harvestEntries = pgTable(
  'harvest_entries',
  {
    id: id(),
    /** The client's key for this entry: sending it again returns the first result. */
    idempotencyKey: text('idempotency_key').notNull().unique(),
    foragerId: text('forager_id').notNull().references(() => users.id),
    parcelId: uuid('parcel_id').notNull().references(() => parcels.id),
    permitId: uuid('permit_id').references(() => permits.id),
    visitId: uuid('visit_id').references(() => visits.id),
    speciesId: uuid('species_id').notNull().references(() => species.id),
    method: methodEnum('method').notNull(),
    quantity: numeric('quantity', { precision: 18, scale: 6, mode: 'string' }).notNull(),
    unit: unitEnum('unit').notNull(),
    /** The quantity in the dimension's base unit (g, mL or count): exact, since a 6-decimal quantity times a 10-decimal NIST factor has at most 16 decimals. */
    dimension: dimensionEnum('dimension').notNull(),
    baseQuantity: numeric('base_quantity', { precision: 36, scale: 16, mode: 'string' }).notNull(),
    localDate: date('local_date', { mode: 'string' }).notNull(),
    position: point('position'),
    photoUploadId: uuid('photo_upload_id').references(() => uploads.id),
    /** Metres from the check-in to where the photo's metadata places it; null without a GPS tag. */
    photoDistanceM: doublePrecision('photo_distance_m'),
    breach: boolean('breach').notNull().default(false),
    acknowledgedOver: boolean('acknowledged_over').notNull().default(false),
    correctsEntryId: uuid('corrects_entry_id').references((): AnyPgColumn => harvestEntries.id),
    correctionReason: text('correction_reason'),
    recordedBy: text('recorded_by').notNull().references(() => users.id),
    recordedAt: createdAt(),
  },
  (t) => [
    index('harvest_entries_parcel_species').on(t.parcelId, t.speciesId, t.localDate),
    index('harvest_entries_forager').on(t.foragerId, t.recordedAt),
    index('harvest_entries_permit').on(t.permitId),
    index('harvest_entries_visit').on(t.visitId),
    /** Corrections are few: finding an entry's corrections reads only these. */
    index('harvest_entries_corrects').on(t.correctsEntryId).where(sql`${t.correctsEntryId} is not null`),
    check('harvest_entries_correction_reason', sql`${t.correctsEntryId} is null or ${t.correctionReason} is not null`),
    check('harvest_entries_positive_unless_correction', sql`${t.correctsEntryId} is not null or ${t.quantity} > 0`),
  ],
);

/**
 * The ledger summed as the limits count it, kept by a trigger on each new entry (drizzle/0009): one
 * row per forager, parcel, species, dimension, permit, day and visit, a correction counted on its
 * entry's day, visit and permit. Each row also carries the whole day's total of its forager and
 * permit, and the whole visit's, so the audit finds the busiest day and visit with one MAX over
 * these rows, with no second grouping of the ledger. Derived: rebuilt from the ledger at will.
 * Its unique key, with NULLS NOT DISTINCT and the sums included for index-only scans, is made in
 * that migration: drizzle's index builder has neither.
 */
export const harvestTotals = pgTable(
  'harvest_totals',
  {
    parcelId: uuid('parcel_id').notNull().references(() => parcels.id),
    speciesId: uuid('species_id').notNull().references(() => species.id),
    dimension: dimensionEnum('dimension').notNull(),
    foragerId: text('forager_id').notNull().references(() => users.id),
    permitId: uuid('permit_id').references(() => permits.id),
    localDate: date('local_date', { mode: 'string' }).notNull(),
    visitId: uuid('visit_id').references(() => visits.id),
    /** Base units (g, mL or count) of this row's entries. */
    total: numeric('total', { mode: 'string' }).notNull(),
    /** Base units of every row of this forager, parcel, species, dimension, permit and day. */
    dayTotal: numeric('day_total', { mode: 'string' }).notNull(),
    /** Base units of every row of this visit, species, dimension and permit; null without a visit. */
    visitTotal: numeric('visit_total', { mode: 'string' }),
    /** Entries that add (corrections that take away are not counted), and breaches. */
    entries: integer('entries').notNull(),
    breaches: integer('breaches').notNull(),
  },
  (t) => [index('harvest_totals_visit').on(t.visitId).where(sql`${t.visitId} is not null`)],
);

/** The parcels with anything in the ledger, kept by the same trigger: an audit skips the rest without reading the totals. */
export const harvestedParcels = pgTable('harvested_parcels', {
  parcelId: uuid('parcel_id').primaryKey().references(() => parcels.id),
});

export type Visit = typeof visits.$inferSelect;
export type CheckIn = typeof checkIns.$inferSelect;
export type HarvestEntry = typeof harvestEntries.$inferSelect;
export type NewHarvestEntry = typeof harvestEntries.$inferInsert;
