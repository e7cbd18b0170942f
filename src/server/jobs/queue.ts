import { sql, type SQL } from 'drizzle-orm';
import PgBoss from 'pg-boss';
import type { Db, Executor } from '../../db/client';
import type { Log } from '../log';
import { dateChanges } from './date-changes';
import { refundPaymentJob } from './refund-payment';
import { reminders } from './reminders';
import type { JobAttempt, JobDefinition, QueueOptions } from './registry';
import { sendMailJob } from './send-mail';

/**
 * Work that runs on time, not on requests, through a job queue kept in PostgreSQL (pg-boss 10, schema
 * `pgboss`, made by drizzle/0017_job_queue.sql). Each app process that calls startJobs works every
 * queue here and keeps its schedule.
 *
 * Several processes on one database still run each scheduled job once. The schedules live in one table
 * (pgboss.schedule). Every 30 s each process tries to stamp `pgboss.version.cron_on`; the UPDATE only
 * matches when the last stamp is over 30 s old, so one process wins the row and queues what is due, as
 * a job with a singleton key and a 60-second slot that a unique index holds to one per minute. A worker
 * then takes each job with SELECT … FOR UPDATE SKIP LOCKED, so exactly one process runs it.
 */
export const appJobs: readonly JobDefinition[] = [dateChanges, reminders, sendMailJob as JobDefinition, refundPaymentJob as JobDefinition];

export type AppJobName = (typeof appJobs)[number]['name'];

const schema = 'pgboss';
/** How often an idle worker asks for a job (pg-boss's default is 2 s). */
const pollingIntervalSeconds = 5;

let running: { boss: PgBoss; log: Log; workers: Map<string, string> } | null = null;
let starting: Promise<void> | null = null;

/**
 * Starts the queue: checks that the migration made pg-boss's schema (it never makes or changes it
 * itself), creates each job's queue, keeps each cron, and works them. A job with a cron is also sent
 * once now (at most once a minute across processes), so a server that was down at midnight catches up.
 */
export function startJobs(options: StartOptions): Promise<void> {
  starting ??= start(options).catch((error: unknown) => {
    starting = null;
    throw error;
  });
  return starting;
}

type StartOptions = {
  db: Db;
  databaseUrl: string;
  log: Log;
  jobs?: readonly JobDefinition[];
  /** Retry settings that replace a job's own, by job name (the server's MAIL_RETRY_DELAY_SECONDS for `send-mail`). */
  queueSettings?: Readonly<Record<string, Partial<QueueOptions>>>;
};

async function start({ db, databaseUrl, log, jobs = appJobs, queueSettings = {} }: StartOptions) {
  const boss = new PgBoss({
    connectionString: databaseUrl,
    schema,
    migrate: false,
    max: 3,
    application_name: 'tallywood-jobs',
    // Failed jobs stay in pgboss.job, where /api/health counts them, for three days before they are archived.
    archiveFailedAfterSeconds: 3 * 24 * 60 * 60,
  });
  boss.on('error', (error) => log.error({ err: error }, 'jobs: the queue reported an error'));
  const workers = new Map<string, string>();
  try {
    // Processes starting at once on a new database would make the same queues at once, and pg-boss's
    // create_queue then deadlocks (each inserts into pgboss.queue, then adds a foreign key to it, which
    // waits for the other's insert). So they take turns: pg-boss's start (which makes its own cron
    // queue) and the queues, under a lock held by a transaction of the app's pool meanwhile.
    await db.transaction(async (tx) => {
      await tx.execute(sql`select pg_advisory_xact_lock(hashtext('tallywood:start-job-queue'))`);
      await boss.start();
      for (const job of jobs) {
        const queue = { name: job.name, ...job.queue, ...queueSettings[job.name] };
        await boss.createQueue(job.name, queue);
        // A queue made earlier keeps the settings it was made with until told; jobs sent from now on take these.
        await boss.updateQueue(job.name, queue);
      }
    });
    for (const job of jobs) {
      let worker = '';
      const workOptions = { batchSize: 1, includeMetadata: true as const, pollingIntervalSeconds: job.pollingIntervalSeconds ?? pollingIntervalSeconds };
      worker = await boss.work<object>(job.name, workOptions, async (batch) => {
        // pg-boss counts retries as it hands a job out: the last try is the one at its retry limit.
        for (const item of batch) await runJob(job, { db, log, id: item.id, data: item.data, attempt: { number: item.retryCount + 1, last: item.retryCount >= item.retryLimit } });
        // A worker that found a job asks again at once rather than after its interval, so a queue of them drains.
        if (batch.length > 0 && worker) boss.notifyWorker(worker);
      });
      workers.set(job.name, worker);
      if (job.cron) {
        await boss.schedule(job.name, job.cron, {}, { tz: 'UTC' });
        await boss.send(job.name, {}, { singletonKey: 'on-start', singletonSeconds: 60 });
      }
    }
    await dropRetiredSchedules(boss, jobs);
  } catch (error) {
    await boss.stop({ graceful: false }).catch(() => {});
    throw error;
  }
  running = { boss, log, workers };
  log.info({ jobs: jobs.map((job) => job.name) }, 'jobs: the queue started');
}

/**
 * A job taken out of `appJobs` leaves its row in pgboss.schedule, and the cron would go on queuing runs
 * that no worker takes. Any schedule that no job here (or in `jobs`) keeps is removed.
 */
async function dropRetiredSchedules(boss: PgBoss, jobs: readonly JobDefinition[]) {
  const kept = new Set([...appJobs, ...jobs].filter((job) => job.cron).map((job) => job.name));
  for (const { name } of await boss.getSchedules()) if (!kept.has(name)) await boss.unschedule(name);
}

async function runJob(job: JobDefinition, { db, log, id, data, attempt }: { db: Db; log: Log; id: string; data: object; attempt: JobAttempt }) {
  const jobLog = log.child({ job: job.name, jobId: id, attempt: attempt.number });
  const started = performance.now();
  try {
    await job.run({ db, now: new Date(), data, attempt, log: jobLog });
  } catch (error) {
    jobLog.error({ err: error }, 'job failed');
    throw error; // pg-boss marks it failed and retries it as its queue says
  }
  jobLog.info({ ms: Math.round(performance.now() - started) }, 'job done');
}

/** Whether this process's queue is started (sendJob throws until it is). */
export function jobsRunning() {
  return running !== null;
}

/** Stops taking jobs, lets one being run finish (up to 10 s), and closes the queue's connections. */
export async function stopJobs() {
  await starting?.catch(() => {});
  const current = running;
  running = null;
  starting = null;
  if (!current) return;
  await current.boss.stop({ graceful: true, timeout: 10_000 });
  current.log.info('jobs: the queue stopped');
}

/**
 * Queues one run of a job now (or as `options` say, e.g. `startAfter`); its id, or null when a
 * singleton refused it. With `tx`, the job is written in that transaction: it exists only if the
 * transaction commits, and a worker can take it only once it has. The job's worker is woken at once.
 */
export async function sendJob(name: AppJobName, data: object = {}, { tx, ...options }: PgBoss.SendOptions & { tx?: Executor } = {}): Promise<string | null> {
  if (!running) throw new Error('the job queue is not running');
  const id = await running.boss.send(name, data, tx ? { ...options, db: through(tx) } : options);
  const worker = running.workers.get(name);
  if (worker) running.boss.notifyWorker(worker);
  return id;
}

/** pg-boss's statements (`$1`, `$2`… placeholders) run through a Drizzle database or transaction. */
function through(executor: Executor): PgBoss.Db {
  return {
    async executeSql(text, values) {
      const chunks: SQL[] = text.split(/\$(\d+)/).map((part, i) => (i % 2 === 0 ? sql.raw(part) : sql`${param(values[Number(part) - 1])}`));
      return { rows: [...(await executor.execute(sql.join(chunks)))] };
    },
  };
}

/** A value as postgres.js takes it: pg-boss's own driver (pg) turns objects into JSON and undefined into null itself. */
function param(value: unknown) {
  if (value === undefined || value === null) return null;
  if (value instanceof Date) return value.toISOString();
  if (typeof value === 'object') return JSON.stringify(value);
  return value;
}
