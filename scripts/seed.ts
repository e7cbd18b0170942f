// Loads the demo scenario in data/ when the database has no accounts yet.
import { join } from 'node:path';
import { closeDb, createDb } from '../src/db/client';
import { readDemo, seedDemoIfEmpty } from '../src/db/demo/seed-demo';

const url = process.env.DATABASE_URL;
if (!url) throw new Error('DATABASE_URL is not set');
const db = createDb(url, { max: 1 });
const started = performance.now();
const loaded = await seedDemoIfEmpty(db, readDemo(join(import.meta.dirname, '..', 'data')));
const ms = Math.round(performance.now() - started);
console.log(loaded ? `[tallywood] demo scenario loaded (${ms} ms)` : '[tallywood] database already has data; demo not loaded');
await closeDb(db);
