import type { Db } from '../db/client';
import { digestCounts, listDigestLandowners, listReminderRecipients, loadReminderFacts } from '../db/reminders.queries';
import { digestMail, reminderFooter, reminderMail, reminderText, type ReminderMail } from '../lib/reminder-words';
import { digestLines, digestWeek, dueReminders } from '../lib/reminders';
import type { Log } from './log';

/** One reminder e-mail, ready for `sendMail`: the HTML part is made from `heading`, `paragraphs` and `action` by the shared frame. */
export type ReminderDelivery = {
  purpose: string;
  to: string;
  dedupeKey: string;
  subject: string;
  text: string;
  heading: string;
  paragraphs: string[];
  action: { label: string; url: string };
};

/**
 * Sends every reminder due at `now` (issue 14): for each person who could get one, loads their facts
 * and switches, asks the pure rule which are due, and hands each to `deliver` with its dedupe key, so
 * a reminder already sent is not sent again however often this runs. On a landowner's Monday, their
 * digest of the week goes too, only when the week had something on their parcels. A failed send is logged and the
 * others still go; the run then fails, so the queue tries again and sends only what did not go.
 */
export async function sendDueReminders(db: Db, { now, origin, deliver, log }: { now: Date; origin: string; deliver: (mail: ReminderDelivery) => Promise<void>; log: Log }) {
  const failures: unknown[] = [];
  let tried = 0;
  const send = async (mail: ReminderMail, to: string, dedupeKey: string) => {
    tried += 1;
    try {
      await deliver({
        purpose: mail.purpose, to, dedupeKey, subject: mail.subject, text: reminderText(mail),
        heading: mail.heading, paragraphs: [...mail.paragraphs, ...reminderFooter(mail)], action: mail.action,
      });
    } catch (error) {
      log.error({ err: error, purpose: mail.purpose }, 'could not send a reminder');
      failures.push(error);
    }
  };
  for (const { userId, email } of await listReminderRecipients(db)) {
    const facts = await loadReminderFacts(db, { userId, now });
    for (const reminder of dueReminders(facts, now)) await send(reminderMail(reminder, origin), email, reminder.dedupeKey);
  }
  for (const landowner of await listDigestLandowners(db)) {
    const week = digestWeek(landowner, now);
    if (!week) continue;
    const lines = digestLines(await digestCounts(db, { ownerId: landowner.userId, ...week }));
    if (lines.length > 0) await send(digestMail(week, lines, origin), landowner.email, week.dedupeKey);
  }
  if (failures.length > 0) throw new AggregateError(failures, `${failures.length} of ${tried} reminders could not be sent`);
  return { tried };
}
