import { sql } from 'drizzle-orm';
import { check, index, integer, jsonb, numeric, pgTable, text, timestamp, unique, uuid } from 'drizzle-orm/pg-core';
import { createdAt, id, updatedAt } from './columns';
import { limitScopeEnum, methodEnum, speciesKindEnum, unitEnum } from './enums';
import { parcels } from './land';
import { permits } from './permits';
import { users } from './auth';

export type Lookalike = { commonName: string; scientificName: string; danger: 'deadly' | 'toxic' | 'inedible'; howToTell: string };
/** A yearly window, month-day to month-day inclusive; end before start means it crosses New Year. */
export type SeasonWindow = { start: string; end: string };

export const species = pgTable('species', {
  id: id(),
  slug: text('slug').notNull().unique(),
  scientificName: text('scientific_name').notNull(),
  commonName: text('common_name').notNull(),
  kind: speciesKindEnum('kind').notNull(),
  usualUnit: unitEnum('usual_unit').notNull(),
  usualMethods: methodEnum('usual_methods').array().notNull().default(sql`'{}'::method[]`),
  cautions: text('cautions').array().notNull().default(sql`'{}'::text[]`),
  lookalikes: jsonb('lookalikes').$type<Lookalike[]>().notNull().default([]),
  protectedStatus: text('protected_status'),
  /**
   * Retired by an admin: kept on the allowances and entries that already name it, but no longer
   * offered for a new allowance. Null while it is in use.
   */
  retiredAt: timestamp('retired_at', { withTimezone: true, mode: 'date' }),
  retiredBy: text('retired_by').references(() => users.id),
  createdAt: createdAt(),
  updatedAt: updatedAt(),
});

/**
 * One caution of a species with its source. The species' `cautions` array, which the field and the
 * audit read, is kept from these rows by a trigger (drizzle/0016), in `position` order.
 */
export const speciesCautions = pgTable(
  'species_cautions',
  {
    id: id(),
    speciesId: uuid('species_id').notNull().references(() => species.id, { onDelete: 'cascade' }),
    position: integer('position').notNull(),
    text: text('text').notNull(),
    /** The guide, paper or page the caution comes from: a title or a full citation. */
    sourceTitle: text('source_title').notNull(),
    sourceUrl: text('source_url'),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [index('species_cautions_species').on(t.speciesId, t.position)],
);

/**
 * The harvest terms of one species on one parcel. Removing one keeps the row (and the permits'
 * tighter limits on it) as history; adding the species again brings it back.
 */
export const allowances = pgTable(
  'allowances',
  {
    id: id(),
    parcelId: uuid('parcel_id').notNull().references(() => parcels.id, { onDelete: 'cascade' }),
    speciesId: uuid('species_id').notNull().references(() => species.id),
    seasons: jsonb('seasons').$type<SeasonWindow[]>().notNull(),
    methods: methodEnum('methods').array().notNull(),
    removedAt: timestamp('removed_at', { withTimezone: true, mode: 'date' }),
    removedBy: text('removed_by').references(() => users.id),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [unique('allowances_parcel_species').on(t.parcelId, t.speciesId)],
);

/**
 * A limit of an allowance. permitId null: the parcel's own limit. permitId set: a permit's tighter
 * limit, or a club permit's club-wide cap (scope club-season, which needs a permit). One limit per
 * allowance, permit, scope and measure: its unique index is on an expression (the unit's measure,
 * `unit_measure` in drizzle/0010), which drizzle's builder cannot state.
 */
export const limits = pgTable(
  'limits',
  {
    id: id(),
    allowanceId: uuid('allowance_id').notNull().references(() => allowances.id, { onDelete: 'cascade' }),
    permitId: uuid('permit_id').references(() => permits.id, { onDelete: 'cascade' }),
    scope: limitScopeEnum('scope').notNull(),
    quantity: numeric('quantity', { precision: 18, scale: 6, mode: 'string' }).notNull(),
    unit: unitEnum('unit').notNull(),
    createdAt: createdAt(),
  },
  (t) => [
    index('limits_permit').on(t.permitId),
    check('limits_quantity_positive', sql`${t.quantity} > 0`),
    check('limits_club_needs_permit', sql`${t.scope} <> 'club-season' or ${t.permitId} is not null`),
  ],
);

export type Species = typeof species.$inferSelect;
export type NewSpecies = typeof species.$inferInsert;
export type SpeciesCaution = typeof speciesCautions.$inferSelect;
export type Allowance = typeof allowances.$inferSelect;
export type Limit = typeof limits.$inferSelect;
