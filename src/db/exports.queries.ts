import { sql, type SQL } from 'drizzle-orm';
import type { ExportParcel } from '../lib/boundary-exports';
import type { Forager } from '../lib/field/types';
import type { Executor } from './client';
import { usableBy } from './field.queries';

/**
 * Coordinates as stored: ST_AsGeoJSON writes the shortest decimals that read back as the same
 * double, up to this many after the point (PostGIS manual, ST_AsGeoJSON `maxdecimaldigits`; 15 is
 * its most), so an exported file holds the boundary exactly, not rounded like the maps' 7.
 */
const exactDigits = 15;

type Row = { id: string; name: string; description: string; time_zone: string; boundary: ExportParcel['boundary']; zones: ExportParcel['zones'] };

function exportQuery(where: SQL, tail: SQL = sql``) {
  return sql`
    select p.id, p.name, p.description, p.time_zone, ST_AsGeoJSON(p.boundary, ${exactDigits})::json as boundary,
      coalesce((select json_agg(json_build_object('name', z.name, 'reason', z.reason, 'boundary', ST_AsGeoJSON(z.boundary, ${exactDigits})::json) order by z.name, z.id)
        from no_harvest_zones z where z.parcel_id = p.id), '[]') as zones
    from parcels p
    where ${where} ${tail}`;
}

const toExport = (row: Row): ExportParcel & { id: string; timeZone: string } => ({
  id: row.id,
  name: row.name,
  description: row.description,
  timeZone: row.time_zone,
  boundary: row.boundary,
  zones: row.zones,
});

/** One parcel's boundary and no-harvest zones, only when `ownerId` owns it (drafts and archived too: they are the owner's). */
export async function findParcelExportForOwner(db: Executor, { parcelId, ownerId }: { parcelId: string; ownerId: string }) {
  const [row] = await db.execute<Row>(exportQuery(sql`p.id = ${parcelId}::uuid and p.owner_id = ${ownerId}::text`));
  return row ? toExport(row) : null;
}

/**
 * The boundaries and zones of the parcels a forager may use, by the field pack's rule (`usableBy`:
 * listed, with an approved or active permit held personally or by one of their clubs), by name.
 */
export async function listUsableParcelExports(db: Executor, { forager, limit }: { forager: Forager; limit: number }) {
  const rows = await db.execute<Row>(exportQuery(usableBy(forager), sql`order by p.name, p.id limit ${limit}`));
  return rows.map(toExport);
}
