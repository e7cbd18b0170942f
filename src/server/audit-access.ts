import { db } from '../db';
import type { AuditScope } from '../db/audit.queries';
import { ownsParcel } from '../db/parcel-rules.queries';
import type { Actor } from '../lib/actor';
import { notFound } from '../lib/errors';
import { guard, idParam } from './http';

/** A steward's club from the path; another club's id answers 404, a forager without a stewardship 403. */
export function stewardedClub(locals: App.Locals, params: Record<string, string | undefined>) {
  const clubId = idParam(params.id, 'Club');
  const actor = guard(locals.actor, 'club:read', { clubId });
  return { actor, clubId };
}

/**
 * Whose view of one parcel's entries a request gets: the landowner's (everyone's entries, or one
 * club's when `clubId` is given), or a steward's of that club. Anyone else: 404.
 */
export async function parcelReportScope(actor: Actor, { parcelId, clubId }: { parcelId: string; clubId: string | null }): Promise<AuditScope & { parcelId: string }> {
  if (await ownsParcel(db, { parcelId, ownerId: actor.id })) return clubId ? { clubId, parcelId } : { ownerId: actor.id, parcelId };
  if (clubId && actor.stewardOfClubIds.includes(clubId)) return { clubId, parcelId };
  throw notFound('Parcel');
}
