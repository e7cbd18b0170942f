import { z } from 'zod';
import { isoDate } from './schema-parts';

/** The API's and the forms' rules for club memberships, audits, flags and season reports. */

const uuid = z.string().uuid('That is not a valid id.');

export const inviteMemberSchema = z.object({
  email: z.string().trim().toLowerCase().email('Enter an e-mail address like name@example.org.').max(254),
  role: z.enum(['member', 'steward'], { error: 'Choose member or steward.' }).default('member'),
});

export const manageMembershipSchema = z.object({ action: z.enum(['remove', 'make-steward', 'make-member'], { error: 'Choose remove, make-steward or make-member.' }) });

export const answerMembershipSchema = z.object({ action: z.enum(['accept', 'decline', 'leave'], { error: 'Choose accept, decline or leave.' }) });

export const flagNoteSchema = z.object({
  note: z.string().trim().min(1, 'Write what was done or agreed.').max(2000, 'Keep the note under 2,000 characters.'),
  handled: z.boolean().default(false),
  /** Also e-mail the note to the forager whose entry was flagged, with the flag's facts. */
  sendToMember: z.boolean().default(false),
});

/** `asOf`: the date whose season is audited (the season in progress then, or the last one ended). */
export const auditQuerySchema = z.object({ asOf: isoDate.optional() });

export const auditEntriesQuerySchema = z.object({
  asOf: isoDate.optional(),
  parcelId: uuid,
  speciesId: uuid,
  foragerId: z.string().min(1, 'Name the forager.'),
});

export const seasonReportQuerySchema = z.object({ asOf: isoDate.optional(), club: z.union([uuid, z.literal('')]).optional() });

export const sendSeasonReportSchema = z.object({ asOf: isoDate.optional(), clubId: uuid.nullish() });

export type InviteMemberInput = z.infer<typeof inviteMemberSchema>;
export type FlagNoteInput = z.infer<typeof flagNoteSchema>;
