import { index, pgTable, text, unique, uuid } from 'drizzle-orm/pg-core';
import { at, createdAt, id } from './columns';
import { clubRoleEnum, membershipStateEnum } from './enums';
import { users } from './auth';

export const clubs = pgTable('clubs', {
  id: id(),
  slug: text('slug').notNull().unique(),
  name: text('name').notNull(),
  description: text('description').notNull().default(''),
  createdAt: createdAt(),
});

/** A person's place in a club. Leaving or removal ends the membership; the row and its history stay. */
export const clubMemberships = pgTable(
  'club_memberships',
  {
    id: id(),
    clubId: uuid('club_id').notNull().references(() => clubs.id),
    userId: text('user_id').notNull().references(() => users.id),
    role: clubRoleEnum('role').notNull().default('member'),
    state: membershipStateEnum('state').notNull().default('invited'),
    invitedBy: text('invited_by').references(() => users.id),
    joinedAt: at('joined_at'),
    endedAt: at('ended_at'),
    createdAt: createdAt(),
  },
  (t) => [unique('club_memberships_club_user').on(t.clubId, t.userId), index('club_memberships_user').on(t.userId)],
);

export type Club = typeof clubs.$inferSelect;
export type ClubMembership = typeof clubMemberships.$inferSelect;
