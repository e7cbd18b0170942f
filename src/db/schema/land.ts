import { sql } from 'drizzle-orm';
import { bigint, boolean, check, date, doublePrecision, index, integer, pgTable, text, unique, uuid } from 'drizzle-orm/pg-core';
import { at, createdAt, id, multiPolygon, updatedAt } from './columns';
import { hazardKindEnum, parcelStatusEnum } from './enums';
import { users } from './auth';

export const parcels = pgTable(
  'parcels',
  {
    id: id(),
    ownerId: text('owner_id').notNull().references(() => users.id),
    name: text('name').notNull(),
    description: text('description').notNull().default(''),
    status: parcelStatusEnum('status').notNull().default('draft'),
    boundary: multiPolygon('boundary').notNull(),
    /** Geodesic area on the WGS 84 spheroid (PostGIS ST_Area on geography), kept with the boundary. */
    areaM2: doublePrecision('area_m2').notNull(),
    /** IANA zone in which seasons, closures and the calendar day are read. */
    timeZone: text('time_zone').notNull(),
    nearingThresholdPercent: integer('nearing_threshold_percent').notNull().default(80),
    openToRequests: boolean('open_to_requests').notNull().default(false),
    /**
     * Raised by triggers in the transaction of every change to the facts all foragers share (the
     * parcel's own columns, its terms, closures, hazards, allowances, their limits and species;
     * drizzle/0022), so the check-in may keep those facts by parcel and version (loadMeasuredParcelsNear).
     */
    factsVersion: bigint('facts_version', { mode: 'number' }).notNull().default(1),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [
    index('parcels_owner').on(t.ownerId),
    index('parcels_boundary_gist').using('gist', t.boundary),
    /** Metre-based ST_DWithin on geography uses this index rather than a scan. */
    index('parcels_boundary_geog_gist').using('gist', sql`(${t.boundary}::geography)`),
    check('parcels_threshold_range', sql`${t.nearingThresholdPercent} between 1 and 100`),
    check('parcels_area_positive', sql`${t.areaM2} > 0`),
  ],
);

export const noHarvestZones = pgTable(
  'no_harvest_zones',
  {
    id: id(),
    parcelId: uuid('parcel_id').notNull().references(() => parcels.id, { onDelete: 'cascade' }),
    name: text('name').notNull(),
    reason: text('reason').notNull().default(''),
    boundary: multiPolygon('boundary').notNull(),
    createdBy: text('created_by').references(() => users.id),
    createdAt: createdAt(),
  },
  (t) => [index('no_harvest_zones_parcel').on(t.parcelId), index('no_harvest_zones_boundary_gist').using('gist', t.boundary)],
);

/** The whole parcel is shut from startsOn to endsOn, both inclusive, in the parcel's time zone. */
export const closures = pgTable(
  'closures',
  {
    id: id(),
    parcelId: uuid('parcel_id').notNull().references(() => parcels.id, { onDelete: 'cascade' }),
    startsOn: date('starts_on', { mode: 'string' }).notNull(),
    endsOn: date('ends_on', { mode: 'string' }).notNull(),
    reason: text('reason').notNull(),
    createdBy: text('created_by').references(() => users.id),
    createdAt: createdAt(),
  },
  (t) => [index('closures_parcel').on(t.parcelId), check('closures_order', sql`${t.endsOn} >= ${t.startsOn}`)],
);

export const hazards = pgTable(
  'hazards',
  {
    id: id(),
    parcelId: uuid('parcel_id').notNull().references(() => parcels.id, { onDelete: 'cascade' }),
    kind: hazardKindEnum('kind').notNull(),
    title: text('title').notNull(),
    detail: text('detail').notNull().default(''),
    createdAt: createdAt(),
  },
  (t) => [index('hazards_parcel').on(t.parcelId)],
);

/** Terms are versioned: a new text is a new row; a permit records the version accepted. */
export const terms = pgTable(
  'terms',
  {
    id: id(),
    parcelId: uuid('parcel_id').notNull().references(() => parcels.id, { onDelete: 'cascade' }),
    version: integer('version').notNull(),
    body: text('body').notNull(),
    publishedBy: text('published_by').references(() => users.id),
    publishedAt: at('published_at').notNull().defaultNow(),
  },
  (t) => [unique('terms_parcel_version').on(t.parcelId, t.version)],
);

export type Parcel = typeof parcels.$inferSelect;
export type NewParcel = typeof parcels.$inferInsert;
export type NoHarvestZone = typeof noHarvestZones.$inferSelect;
export type Closure = typeof closures.$inferSelect;
export type Hazard = typeof hazards.$inferSelect;
export type Terms = typeof terms.$inferSelect;
