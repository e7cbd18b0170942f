import { asc } from 'drizzle-orm';
import type { Executor } from './client';
import { species } from './schema';

export async function listSpecies(db: Executor) {
  return db.select().from(species).orderBy(asc(species.commonName));
}
