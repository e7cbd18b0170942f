import type { Tx } from '../db/client';
import { flagMemberFacts } from '../db/flags.queries';
import { memberNoteMail } from '../lib/flag-words';
import { entryNoticeMails } from './entry-notices';
import { mailHtml, sendMail } from './mail';

/**
 * Tells the landowner (and the stewards of a club permit) at once about an entry that went over a
 * limit (a breach, or over on sync) or was recorded off permit; a correction that took its day over
 * is told the same way, naming the day it counts on. Written in `tx`, the transaction that records
 * the entry, so the mail exists exactly when the entry does; each recipient is told once per entry.
 * An entry with a nearing flag or none (and no breach) is told nothing.
 */
export async function noticeBreach(tx: Tx, { entryId, origin }: { entryId: string; origin: string }) {
  for (const mail of await entryNoticeMails(tx, { entryId, origin })) await sendMail(mail, tx);
}

/**
 * Sends a follow-up note to the forager whose entry was flagged, with the flag's facts (species,
 * parcel, the parcel-local day, how much over), in `tx`, the transaction that records the note.
 * Answers the forager's name, or null when there is nobody to send it to.
 */
export async function sendFlagNoteToMember(tx: Tx, { flagId, authorId, note, origin }: { flagId: string; authorId: string; note: string; origin: string }): Promise<string | null> {
  const facts = await flagMemberFacts(tx, { flagId, authorId });
  if (!facts) return null;
  const { heading, paragraphs } = memberNoteMail(facts, note.trim());
  const url = `${origin}/ledger`;
  await sendMail({
    purpose: 'flag-note', to: facts.foragerEmail, subject: heading,
    text: `${heading}\n\n${paragraphs.join('\n\n')}\n\nOpen My ledger: ${url}\n`,
    html: mailHtml({ heading, paragraphs, action: { label: 'Open My ledger', url } }),
  }, tx);
  return facts.foragerName;
}
