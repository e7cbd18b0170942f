import { db } from '../../../db';
import { endpoint } from '../../../server/http';
import { loadCalendarFeed } from '../../../server/calendar-feed';

/**
 * A person's private calendar feed (iCalendar, RFC 5545), opened by the token in its address: no
 * session, since calendar apps fetch it on their own. An unknown or revoked token is a plain 404,
 * so a calendar app shows a sentence rather than JSON.
 */
export const GET = endpoint(async ({ params }) => {
  const calendar = await loadCalendarFeed(db, { token: params.token ?? '' });
  if (calendar === null) {
    return new Response('This calendar address is not in use: it was turned off or replaced by a new one. Make a new address in Tallywood (on My permits, or on Land for a landowner).\n', {
      status: 404,
      headers: { 'content-type': 'text/plain; charset=utf-8', 'cache-control': 'no-store' },
    });
  }
  return new Response(calendar, {
    headers: { 'content-type': 'text/calendar; charset=utf-8', 'cache-control': 'private, max-age=0', 'content-disposition': 'inline; filename="tallywood.ics"' },
  });
});
