import { z } from 'zod';
import { db } from '../../../db';
import { validateBoundaryForSave } from '../../../db/boundaries.queries';
import { parseBoundaryFile } from '../../../lib/boundaries/parse';
import { AppError, invalidInput } from '../../../lib/errors';
import { boundaryGeometry } from '../../../lib/land.schemas';
import { endpoint, geometryBodyBytes, guard, json, parseInput, readJson } from '../../../server/http';
import { readCapped } from '../../../server/request-body';

/** Boundary files beyond this are refused before they are read: a surveyed parcel is a few kilobytes. */
const maxBoundaryFileBytes = 5 * 1024 * 1024;
/** Room for the multipart boundaries and part headers around the file. */
const multipartOverheadBytes = 64 * 1024;

const tooLarge = () => new AppError(413, 'file-too-large', `That file is larger than ${maxBoundaryFileBytes / 1024 / 1024} MB; a parcel boundary is usually a few kilobytes. Simplify it or upload one parcel at a time.`, 'file');

/**
 * Reads an uploaded boundary file (GeoJSON, KML or GPX) or a drawn geometry and says, for each
 * polygon found, whether it can be saved: problems with where they are, area, and overlap warnings.
 * Nothing is saved.
 */
export const POST = endpoint(async ({ locals, request }) => {
  const actor = guard(locals.actor, 'parcel:draft');
  const type = request.headers.get('content-type') ?? '';
  let features: { name: string | null; geometry: unknown }[];
  let format = 'drawn';
  let notes: string[] = [];
  if (type.startsWith('multipart/form-data')) {
    // Read up to the cap while it streams (a chunked body declares no length), then parsed as a form.
    const body = await readCapped(request, maxBoundaryFileBytes + multipartOverheadBytes, tooLarge);
    const form = await new Response(body, { headers: { 'content-type': type } }).formData().catch(() => null);
    const file = form?.get('file');
    if (!(file instanceof File)) throw invalidInput('file', 'Choose a GeoJSON, KML or GPX file to upload.');
    if (file.size > maxBoundaryFileBytes) throw tooLarge();
    const parsed = parseBoundaryFile(await file.text(), file.name);
    if (!parsed.ok) {
      const [first] = parsed.problems;
      const status = first?.code === 'file-too-complex' ? 413 : 400;
      throw new AppError(status, first?.code ?? 'unsupported-format', first?.message ?? 'That file could not be read.', 'file', { problems: parsed.problems });
    }
    ({ features, format, notes } = parsed);
  } else {
    const { geometry } = await readJson(request, z.object({ geometry: boundaryGeometry }), { maxBytes: geometryBodyBytes });
    features = [{ name: null, geometry }];
  }
  const checked = [];
  for (const feature of features) {
    const geometry = parseInput(boundaryGeometry, feature.geometry);
    const result = await validateBoundaryForSave(db, geometry, { ownerId: actor.id });
    checked.push({ name: feature.name, geometry, ...result });
  }
  return json({ format, notes, features: checked });
});
