import type { Db } from '../../db/client';
import type { Log } from '../log';

/** How pg-boss retries a job of this queue that threw: up to `retryLimit` more times, `retryDelay` seconds apart, doubling each time when `retryBackoff`. */
export type QueueOptions = { retryLimit: number; retryDelay: number; retryBackoff: boolean };

/** Which try of a job this is (1 for the first) and whether it is its queue's last: when it throws, pg-boss gives up. */
export type JobAttempt = { number: number; last: boolean };

/** What a job's `run` is given: the database, the instant it runs at (an argument, so tests pass their own), what it was sent, which try this is, and a log line maker. */
export type JobContext<Data> = { db: Db; now: Date; data: Data; attempt: JobAttempt; log: Log };

export type JobDefinition<Data extends object = object> = {
  /** The queue's name in pgboss.queue; kebab-case. */
  name: string;
  queue: QueueOptions;
  /** Five-field cron in UTC (`* * * * *`: every minute), when the job also runs on a schedule. */
  cron?: string;
  /** How often an idle worker asks for one of these jobs, in seconds (5 unless set; pg-boss takes 0.5 at least). */
  pollingIntervalSeconds?: number;
  run(context: JobContext<Data>): Promise<void>;
};

/** A job the queue knows: add it to `appJobs` (src/server/jobs/queue.ts) and it gets its queue, its worker and its schedule. */
export function defineJob<Data extends object = Record<string, never>>(job: JobDefinition<Data>): JobDefinition<Data> {
  return job;
}
