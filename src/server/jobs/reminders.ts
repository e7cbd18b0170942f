import { sendDueReminders } from '../reminders';
import { defineJob } from './registry';

/**
 * Every 15 minutes, so a reminder goes out soon after its parcel's local midnight whatever the zone.
 * Each reminder has its dedupe key, so running again sends nothing twice. The mail module is loaded
 * when the job runs, not when the queue is, as it reads the server's settings.
 */
export const reminders = defineJob({
  name: 'reminders',
  queue: { retryLimit: 2, retryDelay: 60, retryBackoff: true },
  cron: '*/15 * * * *',
  run: async ({ db, now, log }) => {
    const { deliverReminder, siteOrigin } = await import('../reminder-mail');
    await sendDueReminders(db, { now, origin: siteOrigin(), deliver: deliverReminder, log });
  },
});
