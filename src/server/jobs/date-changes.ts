import type { Db } from '../../db/client';
import { closeStaleVisits } from '../../db/field.commands';
import { advancePermitsByDate } from '../../db/permits.lifecycle';
import { defineJob } from './registry';

/**
 * What changes with the date alone, at `now`: approved permits whose first day has come on their
 * parcel's calendar become active and those past their last day expire (in one transaction, each row
 * locked), and visits left open close at the end of their parcel-local day. Both are idempotent, so a
 * run again, or two at once, changes nothing more. Each is tried even when the other fails; the job
 * then fails, and pg-boss tries it again.
 */
export async function applyDateChanges(db: Db, { now }: { now: Date }) {
  const results = await Promise.allSettled([db.transaction((tx) => advancePermitsByDate(tx, { now })), closeStaleVisits(db, { now })]);
  const failures = results.flatMap((result) => (result.status === 'rejected' ? [result.reason as unknown] : []));
  if (failures.length === 1) throw failures[0];
  if (failures.length > 1) throw new AggregateError(failures, 'advancing permits and closing visits both failed');
}

/** Every minute, so a permit starts and a visit ends within a minute of its parcel's midnight. */
export const dateChanges = defineJob({
  name: 'date-changes',
  queue: { retryLimit: 2, retryDelay: 10, retryBackoff: true },
  cron: '* * * * *',
  run: ({ db, now }) => applyDateChanges(db, { now }),
});
