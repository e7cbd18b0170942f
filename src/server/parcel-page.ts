import { db } from '../db';
import { findParcelForOwner } from '../db/parcels.queries';
import { isUuid } from '../lib/ids';
import { signedInActor } from './page';

/** The signed-in landowner and their parcel from the page's path; null when it is not theirs (the page answers 404). */
export async function loadOwnedParcel(locals: App.Locals, id: string | undefined) {
  const actor = signedInActor(locals);
  const parcel = isUuid(id) ? await findParcelForOwner(db, { parcelId: id, ownerId: actor.id }) : null;
  return parcel ? { actor, parcel, api: `/api/parcels/${parcel.id}` } : null;
}

export type OwnedParcel = NonNullable<Awaited<ReturnType<typeof loadOwnedParcel>>>['parcel'];

/**
 * The parcel pages, in the order a landowner works through them; each has its own address under
 * /land/{id}. A new page is a new row here and a file in src/pages/land/[id]/.
 */
export const parcelSections = [
  { key: 'summary', path: '', label: 'Summary' },
  { key: 'rules', path: '/rules', label: 'What may be taken' },
  { key: 'closures', path: '/closures', label: 'Closures and zones' },
  { key: 'terms', path: '/terms', label: 'Terms' },
  { key: 'permits', path: '/permits', label: 'Permits' },
  { key: 'tallies', path: '/tallies', label: 'Tallies' },
  { key: 'settings', path: '/settings', label: 'Settings' },
] as const;

export type ParcelSection = (typeof parcelSections)[number]['key'];
