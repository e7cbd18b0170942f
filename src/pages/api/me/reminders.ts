import { db } from '../../../db';
import { getReminderSettings, saveReminderSettings } from '../../../db/reminders.queries';
import { reminderSettingsSchema } from '../../../lib/reminders.schemas';
import { endpoint, guard, json, readJson } from '../../../server/http';

export const GET = endpoint(async ({ locals }) => {
  const actor = guard(locals.actor, 'reminders:edit-own');
  return json({ settings: await getReminderSettings(db, { userId: actor.id }) });
});

export const PUT = endpoint(async ({ locals, request }) => {
  const actor = guard(locals.actor, 'reminders:edit-own');
  const settings = await readJson(request, reminderSettingsSchema);
  return json({ settings: await saveReminderSettings(db, { userId: actor.id, settings, now: new Date() }) });
});
