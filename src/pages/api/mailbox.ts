import { listCaughtMail } from '../../server/mailbox';
import { notFound } from '../../lib/errors';
import { endpoint, json } from '../../server/http';
import { mayReadMailbox } from '../../server/mail';

/** The local catcher's messages, newest first; absent when a real SMTP server is configured. */
export const GET = endpoint(async ({ request, url, clientAddress }) => {
  if (!mayReadMailbox(request, clientAddress)) throw notFound('The mailbox');
  return json({ messages: await listCaughtMail(url.searchParams.get('to')) });
});
