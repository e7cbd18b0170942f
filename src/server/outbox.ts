import type { Executor } from '../db/client';
import { recordMail } from '../db/mail.queries';
import { jobsRunning, sendJob } from './jobs/queue';
import type { Log } from './log';

/** A file sent with a mail (a report's CSV): its name, type and text. */
export type MailAttachment = { filename: string; contentType: string; content: string };

export type Mail = { purpose: string; to: string; subject: string; text: string; html: string; clientAddress?: string | null; dedupeKey?: string; attachments?: MailAttachment[] };

/**
 * Puts a mail in the outbox: writes it whole as 'waiting' through `db` (the caller's transaction, when
 * it has one, so the mail exists only if the change it tells of does) and queues a `send-mail` job
 * with its id alone, in the same transaction. If the queue is not running, the mail stays 'waiting' and
 * the job's run each minute queues it. The mail's id, or null when its `dedupeKey` was recorded before.
 */
export async function queueMail(db: Executor, mail: Mail, { from, log }: { from: string; log: Log }): Promise<string | null> {
  const mailId = await recordMail(db, {
    purpose: mail.purpose,
    fromAddress: from,
    toAddress: mail.to,
    subject: mail.subject,
    textBody: mail.text,
    htmlBody: mail.html,
    attachments: mail.attachments ?? null,
    clientAddress: mail.clientAddress ?? null,
    dedupeKey: mail.dedupeKey ?? null,
  });
  if (!mailId) return null;
  if (!jobsRunning()) {
    log.warn({ mailId }, 'mail: the job queue is not running; the minute sweep will queue this mail');
    return mailId;
  }
  try {
    await sendJob('send-mail', { mailId }, { tx: db });
  } catch (error) {
    // Inside a transaction the failed statement has aborted it: the change and its mail fail together.
    if ('rollback' in db) throw error;
    log.warn({ err: error, mailId }, 'mail: the send job was not queued; the minute sweep will queue it');
  }
  return mailId;
}

/** A mail's state in words, for the people who read the outbox. */
export function mailStateWords(state: 'waiting' | 'sent' | 'retrying' | 'failed', attempts: number): string {
  if (state === 'sent') return 'sent';
  if (state === 'waiting') return 'waiting to be sent';
  if (state === 'retrying') return `will retry (${attempts} ${attempts === 1 ? 'try' : 'tries'} failed)`;
  return `failed after ${attempts} ${attempts === 1 ? 'try' : 'tries'}; not sent`;
}
