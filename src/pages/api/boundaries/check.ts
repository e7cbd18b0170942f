import { db } from '../../../db';
import { validateBoundaryForSave } from '../../../db/boundaries.queries';
import { parseBoundaryFile } from '../../../lib/boundaries/parse';
import { AppError, invalidInput } from '../../../lib/errors';
import { boundaryGeometry } from '../../../lib/land.schemas';
import { endpoint, guard, json, parseInput } from '../../../server/http';

/** Boundary files beyond this are refused before they are read: a surveyed parcel is a few kilobytes. */
const maxBoundaryFileBytes = 5 * 1024 * 1024;

const tooLarge = () => new AppError(413, 'file-too-large', `That file is larger than ${maxBoundaryFileBytes / 1024 / 1024} MB; a parcel boundary is usually a few kilobytes. Simplify it or upload one parcel at a time.`, 'file');

/**
 * Reads an uploaded boundary file (GeoJSON, KML or GPX) or a drawn geometry and says, for each
 * polygon found, whether it can be saved: problems with where they are, area, and overlap warnings.
 * Nothing is saved.
 */
export const POST = endpoint(async ({ locals, request }) => {
  const actor = guard(locals.actor, 'parcel:draft');
  if (Number(request.headers.get('content-length') ?? 0) > maxBoundaryFileBytes + 64 * 1024) throw tooLarge();
  const type = request.headers.get('content-type') ?? '';
  let features: { name: string | null; geometry: unknown }[];
  let format = 'drawn';
  let notes: string[] = [];
  if (type.startsWith('multipart/form-data')) {
    const form = await request.formData().catch(() => null);
    const file = form?.get('file');
    if (!(file instanceof File)) throw invalidInput('file', 'Choose a GeoJSON, KML or GPX file to upload.');
    if (file.size > maxBoundaryFileBytes) throw tooLarge();
    const parsed = parseBoundaryFile(await file.text(), file.name);
    if (!parsed.ok) {
      const [first] = parsed.problems;
      throw new AppError(400, first?.code ?? 'unsupported-format', first?.message ?? 'That file could not be read.', 'file', { problems: parsed.problems });
    }
    ({ features, format, notes } = parsed);
  } else {
    const body = (await request.json().catch(() => null)) as { geometry?: unknown } | null;
    features = [{ name: null, geometry: parseInput(boundaryGeometry, body?.geometry) }];
  }
  const checked = [];
  for (const feature of features) {
    const geometry = parseInput(boundaryGeometry, feature.geometry);
    const result = await validateBoundaryForSave(db, geometry, { ownerId: actor.id });
    checked.push({ name: feature.name, geometry, ...result });
  }
  return json({ format, notes, features: checked });
});
