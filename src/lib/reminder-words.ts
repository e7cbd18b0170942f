import type { DigestParcel, DigestWeek, Reminder } from './reminders';

/** The words of the reminder e-mails: what, where, when (the parcel's local date in words), a link, the safety line, and where to turn them off. */

/** "Monday, November 2, 2026": a local calendar date in words (the date is already the parcel's own). */
export function formatLongDate(isoDate: string): string {
  const [y, m, d] = isoDate.split('-').map(Number);
  return new Date(Date.UTC(y ?? 1970, (m ?? 1) - 1, d ?? 1)).toLocaleDateString('en-US', { timeZone: 'UTC', weekday: 'long', year: 'numeric', month: 'long', day: 'numeric' });
}

export const reminderSafetyLine = 'Identification is your responsibility; local law and the landowner’s terms come first.';

export type ReminderMail = {
  purpose: string;
  subject: string;
  heading: string;
  paragraphs: string[];
  action: { label: string; url: string };
  settingsUrl: string;
};

const list = (names: string[]) => (names.length <= 1 ? (names[0] ?? '') : `${names.slice(0, -1).join(', ')} and ${names.at(-1)}`);

export function reminderMail(reminder: Reminder, origin: string): ReminderMail {
  const settingsUrl = `${origin}/settings`;
  const where = reminder.parcelName;
  switch (reminder.kind) {
    case 'permitEnding': {
      const whose = reminder.clubName ? `The ${reminder.clubName} permit` : 'Your permit';
      const heading = `${whose} for ${where} ends in 14 days`;
      return {
        purpose: 'reminder-permit-ending', subject: heading, heading, settingsUrl,
        paragraphs: [
          `${whose} for ${where} ends on ${formatLongDate(reminder.endsOn)}, the last day harvest is allowed there under it (the parcel's own calendar).`,
          'To keep foraging there after that, ask the landowner for a new permit from My permits.',
        ],
        action: reminder.clubName ? { label: 'Open Club', url: `${origin}/club` } : { label: 'Open My permits', url: `${origin}/my-permits` },
      };
    }
    case 'seasonOpening': {
      const names = reminder.species.map((s) => s.name);
      const heading = `${list(names)} ${names.length === 1 ? 'comes' : 'come'} into season on ${where} tomorrow`;
      return {
        purpose: 'reminder-season-opening', subject: heading, heading, settingsUrl,
        paragraphs: [
          `From ${formatLongDate(reminder.opensOn)} on ${where}'s calendar:`,
          ...reminder.species.map((s) => `${s.name}: in season until ${formatLongDate(s.endsOn)}.`),
          'Your permit covers that day. Limits, methods, closures and no-harvest zones still apply: check in on the Field before you harvest.',
        ],
        action: { label: 'Open the Field', url: `${origin}/field` },
      };
    }
    case 'closureStarting': {
      const heading = `${where} is closed from tomorrow`;
      const until = reminder.endsOn === reminder.startsOn ? `for ${formatLongDate(reminder.startsOn)} only` : `from ${formatLongDate(reminder.startsOn)} to ${formatLongDate(reminder.endsOn)}`;
      return {
        purpose: 'reminder-closure-starting', subject: heading, heading, settingsUrl,
        paragraphs: [`The landowner has closed ${where} ${until}, both days included. The reason given: "${reminder.reason}"`, 'Nothing may be taken there while it is closed, even with a permit.'],
        action: { label: 'Open My permits', url: `${origin}/my-permits` },
      };
    }
  }
}

const count = (n: number, one: string, many: string) => `${n} ${n === 1 ? one : many}`;

/** The landowner's weekly digest: per parcel, what was recorded, flagged and asked for in the week. */
export function digestMail(week: DigestWeek, parcels: DigestParcel[], origin: string): ReminderMail {
  const heading = `Your week on your land: ${formatLongDate(week.from)} to ${formatLongDate(week.to)}`;
  return {
    purpose: 'reminder-weekly-digest', subject: 'Your week on your land', heading, settingsUrl: `${origin}/settings`,
    paragraphs: [
      'What foragers recorded, what was flagged and who asked for access on your parcels in the last 7 days:',
      ...parcels.map((p) => `${p.parcelName}: ${count(p.entries, 'harvest entry', 'harvest entries')}, ${count(p.flags, 'flag', 'flags')}, ${count(p.requests, 'access request', 'access requests')}.`),
      'Flags and requests wait for you in Tallywood.',
    ],
    action: { label: 'Open Land', url: `${origin}/land` },
  };
}

/** The plain-text part: heading, paragraphs, link, safety line, and where to turn these off. */
export function reminderText(mail: ReminderMail): string {
  return `${mail.heading}\n\n${mail.paragraphs.join('\n\n')}\n\n${mail.action.label}: ${mail.action.url}\n\n${reminderSafetyLine}\n\nTurn these off: ${mail.settingsUrl}\n`;
}

/** The paragraphs of the HTML part after the link: the safety line and where to turn these off. */
export function reminderFooter(mail: ReminderMail): string[] {
  return [reminderSafetyLine, `Turn these off: ${mail.settingsUrl}`];
}
