import { DATABASE_URL } from 'astro:env/server';
import { createDb } from './client';

/** The app's one pool. It holds connections only: no request state lives in the process. */
export const db = createDb(DATABASE_URL);
export type { Db, Executor, Tx } from './client';
