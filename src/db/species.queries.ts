import { asc, eq } from 'drizzle-orm';
import type { Executor } from './client';
import { species } from './schema';

export async function listSpecies(db: Executor) {
  return db.select().from(species).orderBy(asc(species.commonName));
}

export async function findSpecies(db: Executor, { speciesId }: { speciesId: string }) {
  const [row] = await db.select().from(species).where(eq(species.id, speciesId));
  return row ?? null;
}
