import { db } from '../../db';
import { migrationStatus, postgisVersion } from '../../db/migrations';
import { endpoint, json } from '../../server/http';

/** For load balancers and people: is the database there, with PostGIS and every migration? */
export const GET = endpoint(async () => {
  try {
    const [postgis, migrations] = await Promise.all([postgisVersion(db), migrationStatus(db)]);
    const ok = postgis !== null && migrations.upToDate;
    return json({ ok, database: 'reachable', postgis, migrations }, ok ? 200 : 503);
  } catch (error) {
    return json({ ok: false, database: 'unreachable', error: String(error) }, 503);
  }
});
