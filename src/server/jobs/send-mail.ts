import type { Db } from '../../db/client';
import { lockMailToSend, markMailAttemptFailed, markMailSent, waitingMailIds } from '../../db/mail.queries';
import type { Log } from '../log';
import { defineJob } from './registry';

/**
 * The outbox. Every e-mail is first a row of outgoing_mail, written with the change that causes it
 * (src/server/outbox.ts); this job sends it. A run with `{ mailId }` sends that row; the run each
 * minute (no data) queues a run for every row still 'waiting' a minute after it was written, so a
 * crash between the commit and queuing the job loses nothing.
 */

/** What sends one message: nodemailer's `transport.sendMail` in the app, a stand-in in tests. */
export type MailSender = (message: {
  messageId: string;
  from: string;
  to: string;
  subject: string;
  text: string;
  html: string;
  attachments?: { filename: string; contentType: string; content: string }[];
}) => Promise<unknown>;

/** pg-boss tries a failed send again up to 8 times, 30 s after the first failure and twice as long each time after (about 2 h in all); the server's MAIL_RETRY_DELAY_SECONDS replaces the 30 (src/server/startup.ts). */
export const sendMailQueue = { retryLimit: 8, retryDelay: 30, retryBackoff: true };
/** The try after which a mail is 'failed' for good: the first and each retry. */
export const sendMailAttempts = sendMailQueue.retryLimit + 1;

let sender: { send: MailSender; domain: string } | null = null;

/** The app's transport (src/server/startup.ts sets it from mail.ts, which reads the environment). */
export function useMailSender(send: MailSender, { domain }: { domain: string }) {
  sender = { send, domain };
}

/** The domain of a From address (`Tallywood <mail@example.org>` → example.org); tallywood.local when there is none. */
export function mailDomain(from: string) {
  return /@([^>\s]+)>?\s*$/.exec(from)?.[1] ?? 'tallywood.local';
}

export type DeliveryOutcome = 'sent' | 'skipped' | 'retrying' | 'failed';

/**
 * Sends mail `mailId` once. The row is locked while it is sent, so two runs for one mail (a job
 * delivered again, or the sweep's beside the first) send it once: the second finds it locked or sent
 * and does nothing. The Message-ID is made from the row's id, so were a send to be repeated after a
 * crash between the mail server's answer and the commit, the receiving server sees the same message.
 * A failed send is marked 'retrying' (or 'failed' on try `attempts`) and then thrown, so pg-boss tries again.
 */
export async function deliverMail(db: Db, { mailId, send, domain, log, attempts = sendMailAttempts, now = () => new Date() }: { mailId: string; send: MailSender; domain: string; log: Log; attempts?: number; now?: () => Date }): Promise<DeliveryOutcome> {
  let failure: unknown = null;
  const outcome = await db.transaction(async (tx): Promise<DeliveryOutcome> => {
    const mail = await lockMailToSend(tx, { id: mailId });
    if (!mail || mail.state === 'sent' || mail.state === 'failed') return 'skipped';
    if (mail.textBody === null || mail.htmlBody === null || mail.fromAddress === null) {
      await markMailAttemptFailed(tx, { id: mail.id, error: 'the mail was recorded without its text', last: true });
      return 'failed';
    }
    try {
      await send({
        messageId: `<${mail.id}@${domain}>`,
        from: mail.fromAddress,
        to: mail.toAddress,
        subject: mail.subject,
        text: mail.textBody,
        html: mail.htmlBody,
        ...(mail.attachments?.length ? { attachments: mail.attachments } : {}),
      });
    } catch (error) {
      failure = error;
      const last = mail.attempts + 1 >= attempts;
      await markMailAttemptFailed(tx, { id: mail.id, error: (error instanceof Error ? error.message : String(error)).slice(0, 1000), last });
      return last ? 'failed' : 'retrying';
    }
    await markMailSent(tx, { id: mail.id, now: now() });
    return 'sent';
  });
  log.info({ mailId, outcome }, 'mail: delivery');
  if (failure !== null) throw failure;
  return outcome;
}

export const sendMailJob = defineJob<{ mailId?: string }>({
  name: 'send-mail',
  queue: sendMailQueue,
  cron: '* * * * *',
  // A job written in a transaction can be taken only once it commits, after the send woke the worker: within a second, then.
  pollingIntervalSeconds: 1,
  async run({ db, now, data, log }) {
    if (!data.mailId) {
      const ids = await waitingMailIds(db, { before: new Date(now.getTime() - 60_000) });
      if (ids.length === 0) return;
      const { sendJob } = await import('./queue');
      // One run per mail per five minutes, however often the sweep finds it still waiting.
      for (const mailId of ids) await sendJob('send-mail', { mailId }, { singletonKey: `mail-${mailId}`, singletonSeconds: 300 });
      log.info({ mails: ids.length }, 'mail: queued mail left waiting');
      return;
    }
    if (!sender) throw new Error('no mail transport is set (useMailSender)');
    await deliverMail(db, { mailId: data.mailId, send: sender.send, domain: sender.domain, log });
  },
});
