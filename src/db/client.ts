import { drizzle } from 'drizzle-orm/postgres-js';
import postgres from 'postgres';
import * as schema from './schema';

/** A Drizzle database over postgres.js. Scripts and tests make their own; the app uses src/db/index.ts. */
export function createDb(url: string, { max = 10 }: { max?: number } = {}) {
  const client = postgres(url, { max, onnotice: () => {} });
  return drizzle(client, { schema });
}

export type Db = ReturnType<typeof createDb>;
/** A transaction handed to `db.transaction(async (tx) => …)`. */
export type Tx = Parameters<Parameters<Db['transaction']>[0]>[0];
/** What every query function takes first: the database or a transaction. */
export type Executor = Db | Tx;

export async function closeDb(db: Db) {
  await db.$client.end({ timeout: 5 });
}
