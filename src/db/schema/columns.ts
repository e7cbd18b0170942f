import { sql } from 'drizzle-orm';
import { customType, timestamp, uuid } from 'drizzle-orm/pg-core';

/** A GeoJSON geometry as written to the database (RFC 7946 §3.1). */
export type GeoJsonGeometry = { type: string; coordinates: unknown };

/**
 * PostGIS geometry columns. Drizzle's built-in `geometry` is for points only and drops the SRID,
 * so these write GeoJSON through ST_GeomFromGeoJSON. Reading the raw column gives hex EWKB:
 * select `ST_AsGeoJSON(column)` where GeoJSON is wanted.
 */
export const multiPolygon = customType<{ data: GeoJsonGeometry; driverData: string }>({
  dataType: () => 'geometry(MultiPolygon,4326)',
  toDriver: (value) => sql`ST_Multi(ST_SetSRID(ST_GeomFromGeoJSON(${JSON.stringify(value)}),4326))`,
});

export const point = customType<{ data: GeoJsonGeometry; driverData: string }>({
  dataType: () => 'geometry(Point,4326)',
  toDriver: (value) => sql`ST_SetSRID(ST_GeomFromGeoJSON(${JSON.stringify(value)}),4326)`,
});

export const id = () => uuid('id').primaryKey().defaultRandom();
export const createdAt = () => timestamp('created_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow();
export const at = (name: string) => timestamp(name, { withTimezone: true, mode: 'date' });
export const updatedAt = () =>
  timestamp('updated_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow().$onUpdate(() => new Date());
