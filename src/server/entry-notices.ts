import type { Executor } from '../db/client';
import { entryNoticeFacts } from '../db/field-notices.queries';
import { noticeMail } from '../lib/flag-words';
import { mailHtml } from './mail-html';
import type { Mail } from './outbox';

/**
 * The e-mails about one entry that went over a limit (a breach, or over on sync) or was recorded off
 * permit: one to the landowner and one to each steward of a club permit, each with its dedupe key
 * (once per entry and address). None for an entry with a nearing flag or none (and no breach).
 * Read through the entry's own transaction, so it sees the entry before it commits.
 */
export async function entryNoticeMails(db: Executor, { entryId, origin }: { entryId: string; origin: string }): Promise<Mail[]> {
  const facts = await entryNoticeFacts(db, { entryId });
  if (!facts) return [];
  if (!facts.breach && facts.flagKind !== 'off-permit' && facts.flagKind !== 'over-on-sync') return [];
  const mail = noticeMail(facts, origin);
  if (!mail) return [];
  return facts.recipients.map((to) => ({
    purpose: mail.purpose, to, dedupeKey: mail.dedupeKey(to), subject: mail.heading,
    text: `${mail.heading}\n\n${mail.paragraphs.join('\n\n')}\n\n${mail.url}\n`,
    html: mailHtml({ heading: mail.heading, paragraphs: mail.paragraphs, action: { label: 'Open the parcel', url: mail.url } }),
  }));
}
