import { asc, eq } from 'drizzle-orm';
import type { Executor } from './client';
import { species, speciesCautions } from './schema';

export async function listSpecies(db: Executor) {
  return db.select().from(species).orderBy(asc(species.commonName));
}

export async function findSpecies(db: Executor, { speciesId }: { speciesId: string }) {
  const [row] = await db.select().from(species).where(eq(species.id, speciesId));
  return row ?? null;
}

/** One species with its cautions and their sources, in order. */
export async function findSpeciesWithCautions(db: Executor, { speciesId }: { speciesId: string }) {
  const row = await findSpecies(db, { speciesId });
  if (!row) return null;
  const cautions = await db
    .select({ text: speciesCautions.text, sourceTitle: speciesCautions.sourceTitle, sourceUrl: speciesCautions.sourceUrl })
    .from(speciesCautions)
    .where(eq(speciesCautions.speciesId, speciesId))
    .orderBy(asc(speciesCautions.position), asc(speciesCautions.id));
  return { ...row, cautionSources: cautions.length ? cautions : row.cautions.map((text) => ({ text, sourceTitle: '', sourceUrl: null })) };
}
