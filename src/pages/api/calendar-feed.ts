import { db } from '../../db';
import { replaceCalendarFeed, revokeCalendarFeed } from '../../db/calendar-feeds.queries';
import { endpoint, guard, json } from '../../server/http';
import { feedAddresses, newFeedToken } from '../../server/calendar-feed';

/** Makes the signed-in person's calendar feed, or a new address for it: the old address stops working at once. */
export const POST = endpoint(async ({ locals, url }) => {
  const actor = guard(locals.actor, 'calendar-feed:manage-own');
  const { token, tokenHash } = newFeedToken();
  const feed = await replaceCalendarFeed(db, { accountId: actor.id, tokenHash, now: new Date() });
  return json({ feed: { ...feedAddresses(url.origin, token), createdAt: feed.createdAt.toISOString() } }, 201, { 'cache-control': 'no-store' });
});

/** Turns the feed off: its address answers 404 from now on. */
export const DELETE = endpoint(async ({ locals }) => {
  const actor = guard(locals.actor, 'calendar-feed:manage-own');
  const revoked = await revokeCalendarFeed(db, { accountId: actor.id, now: new Date() });
  return json({ revoked });
});
