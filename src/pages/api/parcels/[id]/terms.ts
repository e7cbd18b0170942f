import { db } from '../../../../db';
import { publishTerms } from '../../../../db/parcel-rules.queries';
import { notFound } from '../../../../lib/errors';
import { termsSchema } from '../../../../lib/land.schemas';
import { endpoint, json, readJson } from '../../../../server/http';
import { ownedParcel } from '../../../../server/parcel-access';

/** A new version of the parcel's terms. Holders accept the current version before a permit is active. */
export const POST = endpoint(async ({ locals, params, request }) => {
  const { actor, parcelId } = await ownedParcel(locals, params);
  const { body } = await readJson(request, termsSchema);
  const row = await publishTerms(db, { parcelId, ownerId: actor.id, body, now: new Date() });
  if (!row) throw notFound('Parcel');
  return json({ terms: row }, 201);
});
