import { sql } from 'drizzle-orm';
import { boolean, check, index, jsonb, pgTable, text, uuid } from 'drizzle-orm/pg-core';
import { users } from './auth';
import { createdAt, id } from './columns';
import { flagKindEnum, limitScopeEnum, tallyStateEnum } from './enums';
import { harvestEntries } from './field';
import { parcels } from './land';
import { permits } from './permits';
import { species } from './species';

/** One tally as it stood after the entry that raised a flag. */
export type FlaggedTally = { scope: string; measure?: string; state: string; used: string; limit: string; unit: string; percent: number };

/**
 * A flag: an entry that took a tally over (a breach) or into nearing or reached; or one synced from a
 * device's queue that was over once others' entries were counted, or not clear when it was recorded. Raised in the
 * entry's own transaction, one per entry; append-only (a trigger refuses UPDATE and DELETE).
 * Follow-up is recorded in flag notes.
 */
export const flags = pgTable(
  'flags',
  {
    id: id(),
    kind: flagKindEnum('kind').notNull(),
    entryId: uuid('entry_id').notNull().unique().references(() => harvestEntries.id),
    parcelId: uuid('parcel_id').notNull().references(() => parcels.id),
    speciesId: uuid('species_id').notNull().references(() => species.id),
    foragerId: text('forager_id').notNull().references(() => users.id),
    permitId: uuid('permit_id').references(() => permits.id),
    /** The scopes whose state the entry raised, and the worst state it reached. */
    scopes: limitScopeEnum('scopes').array().notNull(),
    worstState: tallyStateEnum('worst_state').notNull(),
    tallies: jsonb('tallies').$type<FlaggedTally[]>().notNull(),
    /** What the forager's device was told, for the kinds raised on sync (why it is off permit, which limits went over); null for the others. */
    message: text('message'),
    createdAt: createdAt(),
  },
  (t) => [index('flags_parcel').on(t.parcelId, t.createdAt), index('flags_permit').on(t.permitId, t.createdAt)],
);

/** A steward's or landowner's follow-up on a flag. The newest note says whether the flag is handled. Append-only. */
export const flagNotes = pgTable(
  'flag_notes',
  {
    id: id(),
    flagId: uuid('flag_id').notNull().references(() => flags.id),
    authorId: text('author_id').notNull().references(() => users.id),
    note: text('note').notNull(),
    handled: boolean('handled').notNull(),
    createdAt: createdAt(),
  },
  (t) => [index('flag_notes_flag').on(t.flagId, t.createdAt), check('flag_notes_note', sql`length(btrim(${t.note})) > 0`)],
);

export type Flag = typeof flags.$inferSelect;
export type FlagNote = typeof flagNotes.$inferSelect;
