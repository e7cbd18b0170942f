import { sql } from 'drizzle-orm';
import { check, date, index, integer, pgTable, text, uuid } from 'drizzle-orm/pg-core';
import { at, createdAt, id, updatedAt } from './columns';
import { permitStateEnum } from './enums';
import { users } from './auth';
import { clubs } from './clubs';
import { parcels, terms } from './land';

/** Permission for one forager or one club on one parcel; an access request is a permit in `requested`. */
export const permits = pgTable(
  'permits',
  {
    id: id(),
    parcelId: uuid('parcel_id').notNull().references(() => parcels.id),
    holderUserId: text('holder_user_id').references(() => users.id),
    holderClubId: uuid('holder_club_id').references(() => clubs.id),
    state: permitStateEnum('state').notNull().default('requested'),
    startsOn: date('starts_on', { mode: 'string' }).notNull(),
    endsOn: date('ends_on', { mode: 'string' }).notNull(),
    /** Integer minor units (cents) with an ISO 4217 currency; null when there is no fee. */
    feeMinor: integer('fee_minor'),
    currency: text('currency'),
    feePaidAt: at('fee_paid_at'),
    acceptedTermsId: uuid('accepted_terms_id').references(() => terms.id),
    termsAcceptedAt: at('terms_accepted_at'),
    termsAcceptedBy: text('terms_accepted_by').references(() => users.id),
    requestNote: text('request_note').notNull().default(''),
    requestedBy: text('requested_by').references(() => users.id),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [
    index('permits_parcel').on(t.parcelId),
    index('permits_holder_user').on(t.holderUserId),
    index('permits_holder_club').on(t.holderClubId),
    check('permits_one_holder', sql`(${t.holderUserId} is null) <> (${t.holderClubId} is null)`),
    check('permits_date_order', sql`${t.endsOn} >= ${t.startsOn}`),
    check('permits_fee', sql`${t.feeMinor} is null or (${t.feeMinor} >= 0 and ${t.currency} is not null)`),
  ],
);

/** Every change of a permit's state: who, when, why. Append-only (a trigger refuses UPDATE and DELETE). */
export const permitEvents = pgTable(
  'permit_events',
  {
    id: id(),
    permitId: uuid('permit_id').notNull().references(() => permits.id),
    fromState: permitStateEnum('from_state'),
    toState: permitStateEnum('to_state').notNull(),
    actorId: text('actor_id').references(() => users.id),
    reason: text('reason').notNull().default(''),
    at: at('at').notNull().defaultNow(),
  },
  (t) => [index('permit_events_permit').on(t.permitId, t.at)],
);

export type Permit = typeof permits.$inferSelect;
export type NewPermit = typeof permits.$inferInsert;
export type PermitEvent = typeof permitEvents.$inferSelect;
