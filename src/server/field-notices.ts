import { db } from '../db';
import { entryNoticeFacts } from '../db/field-notices.queries';
import { flagMemberFacts } from '../db/flags.queries';
import { memberNoteMail, noticeMail } from '../lib/flag-words';
import { mailHtml, sendMail } from './mail';
import { log } from './log';

/**
 * Tells the landowner (and the stewards of a club permit) at once about an entry that went over a
 * limit (a breach, or over on sync) or was recorded off permit; a correction that took its day over
 * is told the same way, naming the day it counts on. Each recipient is told once per entry: asked
 * again (the entry's key sent again after a lost answer), it sends only what did not go the first time.
 * An entry with a nearing flag or none (and no breach) is told nothing.
 */
export async function noticeBreach({ entryId, origin }: { entryId: string; origin: string }) {
  const facts = await entryNoticeFacts(db, { entryId });
  if (!facts) return;
  if (!facts.breach && facts.flagKind !== 'off-permit' && facts.flagKind !== 'over-on-sync') return;
  const mail = noticeMail(facts, origin);
  if (!mail) return;
  for (const to of facts.recipients) {
    try {
      await sendMail({
        purpose: mail.purpose, to, dedupeKey: mail.dedupeKey(to), subject: mail.heading,
        text: `${mail.heading}\n\n${mail.paragraphs.join('\n\n')}\n\n${mail.url}\n`,
        html: mailHtml({ heading: mail.heading, paragraphs: mail.paragraphs, action: { label: 'Open the parcel', url: mail.url } }),
      });
    } catch (error) {
      log.error({ err: error, purpose: mail.purpose }, 'could not send a mail');
    }
  }
}

/**
 * Sends a follow-up note to the forager whose entry was flagged, with the flag's facts (species,
 * parcel, the parcel-local day, how much over). Answers the forager's name, or null when nothing was
 * sent; a failed send is logged and never undoes the note.
 */
export async function sendFlagNoteToMember({ flagId, authorId, note, origin }: { flagId: string; authorId: string; note: string; origin: string }): Promise<string | null> {
  const facts = await flagMemberFacts(db, { flagId, authorId });
  if (!facts) return null;
  const { heading, paragraphs } = memberNoteMail(facts, note.trim());
  const url = `${origin}/ledger`;
  try {
    await sendMail({
      purpose: 'flag-note', to: facts.foragerEmail, subject: heading,
      text: `${heading}\n\n${paragraphs.join('\n\n')}\n\nOpen My ledger: ${url}\n`,
      html: mailHtml({ heading, paragraphs, action: { label: 'Open My ledger', url } }),
    });
    return facts.foragerName;
  } catch (error) {
    log.error({ err: error, flagId }, 'could not send the flag note');
    return null;
  }
}
