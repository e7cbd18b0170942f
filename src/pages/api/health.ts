import { db } from '../../db';
import { readOutboxHealth } from '../../db/mail.queries';
import { migrationStatus, postgisVersion } from '../../db/migrations';
import { mayEver } from '../../lib/permissions';
import { endpoint, json } from '../../server/http';
import { readQueueHealth } from '../../server/jobs/queue-health';
import { log } from '../../server/log';

/**
 * For load balancers and people: is the database there, with PostGIS and every migration? Anyone
 * may ask, so the answer is a status word only; what went wrong, with versions and counts, goes to the
 * server's log. A signed-in admin also gets the running of the service in numbers: the job queue's (src/server/jobs/): jobs due and
 * not yet taken, jobs that failed after their retries, and how many seconds ago one last completed
 * (null when none has). `queue` is null when its tables could not be read, which is logged. `outbox`
 * counts the e-mail not sent yet (src/server/jobs/send-mail.ts): waiting for its first try, failed and
 * to be tried again, and failed for good in the last three days; null when it could not be read.
 */
export const GET = endpoint(async ({ locals }) => {
  const details = mayEver(locals.actor ?? null, 'health:read-details');
  try {
    const [postgis, migrations, queue, outbox] = await Promise.all([
      postgisVersion(db),
      migrationStatus(db),
      details && readQueueHealth(db).catch((error: unknown) => {
        log.error({ err: error }, 'health: the job queue could not be read');
        return null;
      }),
      details && readOutboxHealth(db, { failedSince: new Date(Date.now() - 3 * 24 * 60 * 60 * 1000) }).catch((error: unknown) => {
        log.error({ err: error }, 'health: the outbox could not be read');
        return null;
      }),
    ]);
    const status = postgis === null ? 'postgis-missing' : migrations.upToDate ? 'ready' : 'migrations-pending';
    if (status !== 'ready') log.error({ status, postgis, applied: migrations.applied, known: migrations.known }, 'health: not ready');
    return json({ ok: status === 'ready', status, ...(details ? { queue, outbox } : {}) }, status === 'ready' ? 200 : 503);
  } catch (error) {
    log.error({ err: error }, 'health: the database did not answer');
    return json({ ok: false, status: 'database-unreachable' }, 503);
  }
});
