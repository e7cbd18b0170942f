import { sql } from 'drizzle-orm';
import type { Executor } from '../../db/client';

export type QueueHealth = { waiting: number; failed: number; lastCompletedSecondsAgo: number | null };

/**
 * The app's jobs as pg-boss's tables have them (pg-boss's own `__pgboss__` queues left out): how many
 * are due and not yet taken, how many failed after their retries (kept three days, src/server/jobs/queue.ts),
 * and how long ago one last completed (null when none has in the last 12 hours, after which they are archived).
 */
export async function readQueueHealth(db: Executor): Promise<QueueHealth> {
  const [row] = await db.execute<QueueHealth>(sql`
    select
      count(*) filter (where state in ('created', 'retry') and start_after <= now())::int as "waiting",
      count(*) filter (where state = 'failed')::int as "failed",
      floor(extract(epoch from now() - max(completed_on) filter (where state = 'completed')))::int as "lastCompletedSecondsAgo"
    from pgboss.job
    where not starts_with(name, '__pgboss__')`);
  return row ?? { waiting: 0, failed: 0, lastCompletedSecondsAgo: null };
}
