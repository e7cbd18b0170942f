import { boolean, pgTable, text } from 'drizzle-orm/pg-core';
import { at } from './columns';
import { users } from './auth';

/**
 * Which reminder e-mails a person wants (issue 14). No row means every kind is on; a row is written
 * the first time they switch one, and only their own.
 */
export const reminderSettings = pgTable('reminder_settings', {
  userId: text('user_id').primaryKey().references(() => users.id, { onDelete: 'cascade' }),
  /** A permit they hold, or their club holds and they steward, ends in 14 days. */
  permitEnding: boolean('permit_ending').notNull().default(true),
  /** A season opens tomorrow on a parcel they may use. */
  seasonOpening: boolean('season_opening').notNull().default(true),
  /** A closure starts tomorrow on a parcel they may use. */
  closureStarting: boolean('closure_starting').notNull().default(true),
  /** A landowner's Monday digest of the last 7 days' entries, flags and access requests on their parcels. */
  weeklyDigest: boolean('weekly_digest').notNull().default(true),
  updatedAt: at('updated_at').notNull().defaultNow(),
});

export type ReminderSettingsRow = typeof reminderSettings.$inferSelect;
