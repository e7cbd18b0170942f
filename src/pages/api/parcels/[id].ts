import { db } from '../../../db';
import { findParcelForOwner, updateParcel } from '../../../db/parcels.queries';
import { AppError, notFound } from '../../../lib/errors';
import { listingRefusal } from '../../../lib/listing';
import { listingFacts } from '../../../db/parcel-rules.queries';
import { recordParcelChange } from '../../../db/parcel-history.queries';
import { parcelUpdateSchema } from '../../../lib/land.schemas';
import { acceptBoundary } from '../../../server/boundaries';
import { endpoint, geometryBodyBytes, guard, idParam, json, readJson } from '../../../server/http';

/** One of the landowner's parcels; another owner's parcel is answered as not found. */
export const GET = endpoint(async ({ locals, params }) => {
  const actor = guard(locals.actor, 'parcel:list-own');
  const parcel = await findParcelForOwner(db, { parcelId: idParam(params.id, 'Parcel'), ownerId: actor.id });
  if (!parcel) throw notFound('Parcel');
  guard(actor, 'parcel:read', { ownerId: parcel.ownerId });
  return json({ parcel });
});

/** Changes the parcel's settings or boundary (a new boundary is checked like a new parcel's). */
export const PATCH = endpoint(async ({ locals, params, request }) => {
  const actor = guard(locals.actor, 'parcel:list-own');
  const parcelId = idParam(params.id, 'Parcel');
  const existing = await findParcelForOwner(db, { parcelId, ownerId: actor.id });
  if (!existing) throw notFound('Parcel');
  guard(actor, 'parcel:edit', { ownerId: existing.ownerId });
  const patch = await readJson(request, parcelUpdateSchema, { maxBytes: geometryBodyBytes });
  if (patch.status === 'listed') guard(actor, 'parcel:list-publicly', { ownerId: existing.ownerId });
  if (patch.openToRequests === true && !existing.openToRequests) {
    const refusal = listingRefusal((await listingFacts(db, { parcelId, ownerId: actor.id })) ?? { allowances: 0, hasTerms: false });
    if (refusal) throw new AppError(409, 'not-ready-for-requests', refusal, 'openToRequests');
  }
  const checked = patch.boundary ? await acceptBoundary(patch.boundary, { ownerId: actor.id, excludeParcelId: parcelId }) : null;
  const parcel = await updateParcel(db, { parcelId, ownerId: actor.id, listed: actor.landownerVerified, patch: { ...patch, ...(checked ? { boundary: checked.boundary } : {}) } });
  const warnings = checked?.warnings ?? [];
  if (!parcel) throw notFound('Parcel');
  // An unverified landowner's parcel stays closed to requests whatever was sent (updateParcel), so the history says what was stored.
  const summary = settingsSummary(existing, { ...patch, openToRequests: patch.openToRequests === undefined ? undefined : actor.landownerVerified && patch.openToRequests });
  if (summary) await recordParcelChange(db, { parcelId, actorId: actor.id, action: 'parcel.settings', summary, now: new Date() });
  if (patch.boundary) await recordParcelChange(db, { parcelId, actorId: actor.id, action: 'parcel.boundary', summary: 'Changed the boundary.', now: new Date() });
  return json({ parcel, warnings });
});

const settingWords = { name: 'the name', description: 'the description', timeZone: 'the time zone', nearingThresholdPercent: 'the nearing threshold' } as const;

/** What a patch changes, in sentences for the parcel's history: "Changed the name. Opened the parcel to requests." */
function settingsSummary(before: Record<string, unknown>, patch: Record<string, unknown>): string | null {
  const differs = (key: string) => patch[key] !== undefined && patch[key] !== before[key];
  const changed = (Object.keys(settingWords) as (keyof typeof settingWords)[]).filter(differs).map((key) => settingWords[key]);
  const sentences = [
    ...(changed.length ? [`Changed ${changed.join(', ')}.`] : []),
    ...(differs('status') ? [`Set the status to ${String(patch.status)}.`] : []),
    ...(differs('openToRequests') ? [patch.openToRequests ? 'Opened the parcel to requests.' : 'Closed the parcel to requests.'] : []),
  ];
  return sentences.length ? sentences.join(' ') : null;
}
