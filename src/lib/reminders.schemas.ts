import { z } from 'zod';

/** One set of schemas for the reminder switches' form and the endpoint that keeps them. */
const onOrOff = (what: string) => z.boolean({ error: `Say whether you want ${what}: true or false.` });

export const reminderSettingsSchema = z.object({
  permitEnding: onOrOff('the reminder 14 days before a permit ends'),
  seasonOpening: onOrOff('the reminder the day before a season opens'),
  closureStarting: onOrOff('the reminder the day before a closure starts'),
  weeklyDigest: onOrOff('the weekly digest of your parcels'),
});

export type ReminderSettingsInput = z.infer<typeof reminderSettingsSchema>;
