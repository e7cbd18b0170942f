import { db } from '../db';
import { validateBoundaryForSave } from '../db/boundaries.queries';
import { AppError } from '../lib/errors';
import type { BoundaryGeometry } from '../lib/land.schemas';

/** Checks a boundary before it is saved; a bad one is a 400 listing every problem (with where). */
export async function acceptBoundary(geometry: BoundaryGeometry, { ownerId, excludeParcelId }: { ownerId: string; excludeParcelId?: string }) {
  const result = await validateBoundaryForSave(db, geometry, { ownerId, excludeParcelId });
  if (!result.ok) {
    const [first] = result.problems;
    throw new AppError(400, 'invalid-boundary', first?.message ?? 'The boundary is not valid.', 'boundary', { problems: result.problems });
  }
  return result;
}
