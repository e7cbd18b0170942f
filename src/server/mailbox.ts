import { LOCAL_FAKES_TOKEN, MAIL_CATCHER_HTTP_URL } from 'astro:env/server';
import { AppError } from '../lib/errors';

/** An attachment the catcher kept, its bytes in base64. */
export type CaughtAttachment = { filename: string; contentType: string; size: number; contentBase64: string };
export type CaughtMail = { id: string; from: string; to: string[]; subject: string; date: string; text: string; html: string | null; attachments?: CaughtAttachment[] };

/** Reads the local mail catcher's messages (only meaningful while it is the transport). */
export async function listCaughtMail(to?: string | null): Promise<CaughtMail[]> {
  const url = new URL('/messages', MAIL_CATCHER_HTTP_URL);
  if (to) url.searchParams.set('to', to);
  try {
    const response = await fetch(url, { headers: { 'x-local-token': LOCAL_FAKES_TOKEN ?? '' } });
    if (!response.ok) throw new Error(`the mail catcher answered ${response.status}`);
    return (await response.json()) as CaughtMail[];
  } catch {
    throw new AppError(503, 'mailbox-unavailable', `The local mail catcher at ${MAIL_CATCHER_HTTP_URL} is not answering; is npm start still running?`);
  }
}
