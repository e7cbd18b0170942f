import type { AdapterAccountType } from '@auth/core/adapters';
import { sql } from 'drizzle-orm';
import { integer, pgTable, primaryKey, text, timestamp } from 'drizzle-orm/pg-core';
import { createdAt, at } from './columns';
import { roleEnum } from './enums';

/** Auth.js's user, with Tallywood's roles. Stewardship is a club membership, not a role here. */
export const users = pgTable('users', {
  id: text('id').primaryKey().$defaultFn(() => crypto.randomUUID()),
  name: text('name'),
  email: text('email').notNull().unique(),
  emailVerified: timestamp('email_verified', { withTimezone: true, mode: 'date' }),
  image: text('image'),
  roles: roleEnum('roles').array().notNull().default(sql`'{forager}'::role[]`),
  /** Set by an admin; until then a landowner may draft parcels but grant no permit. */
  landownerVerifiedAt: at('landowner_verified_at'),
  landownerVerifiedBy: text('landowner_verified_by'),
  /** What a landowner said at sign-up, for the admin who verifies them: the land they manage, and a note. */
  claimedLand: text('claimed_land'),
  signUpNote: text('sign_up_note'),
  /** An admin declined to verify this landowner, with the reason they were sent; verifying later clears it. */
  landownerDeclinedAt: at('landowner_declined_at'),
  landownerDeclineReason: text('landowner_decline_reason'),
  createdAt: createdAt(),
});

export const accounts = pgTable(
  'accounts',
  {
    userId: text('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
    type: text('type').$type<AdapterAccountType>().notNull(),
    provider: text('provider').notNull(),
    providerAccountId: text('provider_account_id').notNull(),
    refresh_token: text('refresh_token'),
    access_token: text('access_token'),
    expires_at: integer('expires_at'),
    token_type: text('token_type'),
    scope: text('scope'),
    id_token: text('id_token'),
    session_state: text('session_state'),
  },
  (t) => [primaryKey({ columns: [t.provider, t.providerAccountId] })],
);

export const sessions = pgTable('sessions', {
  sessionToken: text('session_token').primaryKey(),
  userId: text('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  expires: timestamp('expires', { withTimezone: true, mode: 'date' }).notNull(),
});

export const verificationTokens = pgTable(
  'verification_tokens',
  {
    identifier: text('identifier').notNull(),
    token: text('token').notNull(),
    expires: timestamp('expires', { withTimezone: true, mode: 'date' }).notNull(),
  },
  (t) => [primaryKey({ columns: [t.identifier, t.token] })],
);

export type User = typeof users.$inferSelect;
export type NewUser = typeof users.$inferInsert;
