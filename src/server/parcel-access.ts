import { db } from '../db';
import { ownsParcel } from '../db/parcel-rules.queries';
import { notFound } from '../lib/errors';
import type { Action } from '../lib/permissions';
import { guard, idParam } from './http';

/** The signed-in landowner and the parcel id from the path, when the parcel is theirs; 404 otherwise. */
export async function ownedParcel(locals: App.Locals, params: Record<string, string | undefined>, action: Action = 'parcel:edit') {
  const actor = guard(locals.actor, 'parcel:list-own');
  const parcelId = idParam(params.id, 'Parcel');
  if (!(await ownsParcel(db, { parcelId, ownerId: actor.id }))) throw notFound('Parcel');
  guard(actor, action, { ownerId: actor.id });
  return { actor, parcelId };
}
