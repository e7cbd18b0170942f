import { db } from '../../db';
import { migrationStatus, postgisVersion } from '../../db/migrations';
import { endpoint, json } from '../../server/http';
import { log } from '../../server/log';

/**
 * For load balancers and people: is the database there, with PostGIS and every migration? Anyone
 * may ask, so the answer is a status word only; what went wrong, with versions and counts, goes to
 * the server's log.
 */
export const GET = endpoint(async () => {
  try {
    const [postgis, migrations] = await Promise.all([postgisVersion(db), migrationStatus(db)]);
    const status = postgis === null ? 'postgis-missing' : migrations.upToDate ? 'ready' : 'migrations-pending';
    if (status !== 'ready') log.error({ status, postgis, applied: migrations.applied, known: migrations.known }, 'health: not ready');
    return json({ ok: status === 'ready', status }, status === 'ready' ? 200 : 503);
  } catch (error) {
    log.error({ err: error }, 'health: the database did not answer');
    return json({ ok: false, status: 'database-unreachable' }, 503);
  }
});
