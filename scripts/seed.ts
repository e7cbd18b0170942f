// Loads the demo scenario in data/ when the database has no accounts yet.
import { join } from 'node:path';
import { closeDb, createDb } from '../src/db/client';
import { readDemo, seedDemoIfEmpty } from '../src/db/demo/seed-demo';

/** The tables' owner's connection; DATABASE_URL when the app and the migrations share one role. */
const url = process.env.DATABASE_OWNER_URL ?? process.env.DATABASE_URL;
if (!url) throw new Error('DATABASE_OWNER_URL (or DATABASE_URL) is not set');
const db = createDb(url, { max: 1 });
const started = performance.now();
const loaded = await seedDemoIfEmpty(db, readDemo(join(import.meta.dirname, '..', 'data')));
const ms = Math.round(performance.now() - started);
console.log(loaded ? `[tallywood] demo scenario loaded (${ms} ms)` : '[tallywood] database already has data; demo not loaded');
await closeDb(db);
