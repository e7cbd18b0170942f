// Applies the migrations in drizzle/ as the owner of the tables: DATABASE_OWNER_URL, else DATABASE_URL.
import { join } from 'node:path';
import { closeDb, createDb } from '../src/db/client';
import { applyMigrations } from '../src/db/migrations';

/** The tables' owner's connection; DATABASE_URL when the app and the migrations share one role. */
const url = process.env.DATABASE_OWNER_URL ?? process.env.DATABASE_URL;
if (!url) throw new Error('DATABASE_OWNER_URL (or DATABASE_URL) is not set');
const db = createDb(url, { max: 1 });
const started = performance.now();
await applyMigrations(db, join(import.meta.dirname, '..', 'drizzle'));
console.log(`[tallywood] migrations applied (${Math.round(performance.now() - started)} ms)`);
await closeDb(db);
