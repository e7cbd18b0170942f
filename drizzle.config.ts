import { defineConfig } from 'drizzle-kit';

export default defineConfig({
  dialect: 'postgresql',
  schema: './src/db/schema/index.ts',
  out: './drizzle',
  dbCredentials: { url: process.env.DATABASE_URL ?? 'postgres://app@127.0.0.1:54329/tallywood' },
  /** PostGIS owns its own tables (spatial_ref_sys); keep drizzle-kit's hands off them. */
  extensionsFilters: ['postgis'],
});
