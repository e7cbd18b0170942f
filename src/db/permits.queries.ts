import { and, asc, desc, eq, inArray, or, sql, type SQL } from 'drizzle-orm';
import { alias } from 'drizzle-orm/pg-core';
import type { Executor } from './client';
import { allowances, clubs, limits, parcels, permitEvents, permits, species, terms, users } from './schema';
import type { LimitScope } from '../lib/field/types';
import type { NamedLimit } from '../lib/limit-changes';
import type { Unit } from '../lib/units';

const holderUser = alias(users, 'holder_user');
const actor = alias(users, 'actor');

/** A permit with its parcel's name and zone: what both the lists here and the lifecycle's row lock read. */
export const permitCoreColumns = {
  id: permits.id,
  state: permits.state,
  startsOn: permits.startsOn,
  endsOn: permits.endsOn,
  feeMinor: permits.feeMinor,
  currency: permits.currency,
  feePaidAt: permits.feePaidAt,
  acceptedTermsId: permits.acceptedTermsId,
  parcelId: permits.parcelId,
  parcelName: parcels.name,
  timeZone: parcels.timeZone,
  holderUserId: permits.holderUserId,
  holderClubId: permits.holderClubId,
};

const permitColumns = {
  ...permitCoreColumns,
  termsAcceptedAt: permits.termsAcceptedAt,
  requestNote: permits.requestNote,
  createdAt: permits.createdAt,
  holderName: holderUser.name,
  holderEmail: holderUser.email,
  clubName: clubs.name,
  currentTermsId: sql<string | null>`(select t.id from terms t where t.parcel_id = permits.parcel_id order by t.version desc limit 1)`,
  currentTermsVersion: sql<number | null>`(select t.version from terms t where t.parcel_id = permits.parcel_id order by t.version desc limit 1)`,
  acceptedTermsVersion: sql<number | null>`(select t.version from terms t where t.id = permits.accepted_terms_id)`,
  /** Set when a fee still paid could not be given back after every automatic try: it needs a refund by hand. */
  refundFailedAt: sql<string | null>`(select max(pay.refund_failed_at)::text from payments pay where pay.permit_id = permits.id and pay.state = 'paid')`,
};

function permitsWithHolders(db: Executor) {
  return db
    .select(permitColumns)
    .from(permits)
    .innerJoin(parcels, eq(parcels.id, permits.parcelId))
    .leftJoin(holderUser, eq(holderUser.id, permits.holderUserId))
    .leftJoin(clubs, eq(clubs.id, permits.holderClubId));
}

/** Permits a forager holds personally or through an active club membership. */
export async function listPermitsForForager(db: Executor, { userId, clubIds }: { userId: string; clubIds: string[] }) {
  const held: SQL[] = [eq(permits.holderUserId, userId)];
  if (clubIds.length > 0) held.push(inArray(permits.holderClubId, clubIds));
  return permitsWithHolders(db).where(or(...held)).orderBy(desc(permits.startsOn));
}

/** Every permit on one of the owner's parcels, newest first. */
export async function listPermitsForParcel(db: Executor, { parcelId, ownerId }: { parcelId: string; ownerId: string }) {
  return permitsWithHolders(db).where(and(eq(permits.parcelId, parcelId), eq(parcels.ownerId, ownerId))).orderBy(desc(permits.createdAt));
}

/** Every permit on any of the owner's parcels, in the order they start. */
export async function listPermitsOnOwnersLand(db: Executor, { ownerId }: { ownerId: string }) {
  return permitsWithHolders(db).where(eq(parcels.ownerId, ownerId)).orderBy(asc(permits.startsOn));
}

/** Access requests waiting for the owner's decision, oldest first. */
export async function listRequestsForOwner(db: Executor, { ownerId }: { ownerId: string }) {
  return permitsWithHolders(db).where(and(eq(parcels.ownerId, ownerId), eq(permits.state, 'requested'))).orderBy(asc(permits.createdAt));
}

/** One permit as its landowner sees it, or null for anyone else. */
export async function findPermitForOwner(db: Executor, { permitId, ownerId }: { permitId: string; ownerId: string }) {
  const [row] = await permitsWithHolders(db).where(and(eq(permits.id, permitId), eq(parcels.ownerId, ownerId)));
  return row ?? null;
}

/** One permit as its holder (or a member of the holding club) sees it, or null. */
export async function findPermitForHolder(db: Executor, { permitId, userId, clubIds }: { permitId: string; userId: string; clubIds: string[] }) {
  const held: SQL[] = [eq(permits.holderUserId, userId)];
  if (clubIds.length > 0) held.push(inArray(permits.holderClubId, clubIds));
  const [row] = await permitsWithHolders(db).where(and(eq(permits.id, permitId), or(...held)));
  return row ?? null;
}

/** A permit's history: every state change with who made it and why. */
export async function listPermitEvents(db: Executor, { permitIds }: { permitIds: string[] }) {
  if (permitIds.length === 0) return [];
  return db
    .select({ permitId: permitEvents.permitId, fromState: permitEvents.fromState, toState: permitEvents.toState, reason: permitEvents.reason, at: permitEvents.at, actorName: actor.name })
    .from(permitEvents)
    .leftJoin(actor, eq(actor.id, permitEvents.actorId))
    .where(inArray(permitEvents.permitId, permitIds))
    .orderBy(asc(permitEvents.at));
}

export async function findTerms(db: Executor, { termsId }: { termsId: string }) {
  const [row] = await db.select().from(terms).where(eq(terms.id, termsId));
  return row ?? null;
}

/** Who hears about a permit: the landowner, and the holder (or the holding club's stewards). */
export async function permitContacts(db: Executor, { permitId }: { permitId: string }) {
  const [row] = await db
    .select({
      parcelName: parcels.name,
      ownerEmail: sql<string>`(select u.email from users u where u.id = parcels.owner_id)`,
      ownerName: sql<string | null>`(select u.name from users u where u.id = parcels.owner_id)`,
      holderEmails: sql<string[]>`case when permits.holder_user_id is not null
        then array[(select u.email from users u where u.id = permits.holder_user_id)]
        else coalesce((select array_agg(u.email) from club_memberships m join users u on u.id = m.user_id
          where m.club_id = permits.holder_club_id and m.role = 'steward' and m.state = 'active'), '{}') end`,
      holderName: sql<string | null>`coalesce((select u.name from users u where u.id = permits.holder_user_id), (select c.name from clubs c where c.id = permits.holder_club_id))`,
      isClub: sql<boolean>`permits.holder_club_id is not null`,
      feeMinor: permits.feeMinor,
      currency: permits.currency,
    })
    .from(permits)
    .innerJoin(parcels, eq(parcels.id, permits.parcelId))
    .where(eq(permits.id, permitId));
  return row ?? null;
}

/** The permits' own (tighter) limits, with the species they apply to. */
export async function listPermitLimits(db: Executor, { permitIds }: { permitIds: string[] }) {
  if (permitIds.length === 0) return [];
  return db
    .select({ permitId: limits.permitId, scope: limits.scope, quantity: limits.quantity, unit: limits.unit, speciesName: species.commonName })
    .from(limits)
    .innerJoin(allowances, eq(allowances.id, limits.allowanceId))
    .innerJoin(species, eq(species.id, allowances.speciesId))
    .where(inArray(limits.permitId, permitIds))
    .orderBy(asc(species.commonName));
}

/**
 * Every limit that applies to the approved and active permits on one of the owner's parcels (or to
 * one of them): the parcel's own and each permit's tighter ones, by species. What a limit notice
 * compares before and after a change.
 */
export async function listPermitsBindingLimits(db: Executor, { parcelId, ownerId, permitId }: { parcelId: string; ownerId: string; permitId?: string }) {
  const rows = await db.execute<{ permit_id: string; species_name: string; scope: LimitScope; quantity: string; unit: Unit }>(sql`
    select p.id as permit_id, s.common_name as species_name, l.scope, l.quantity::text as quantity, l.unit
    from permits p
    join parcels pa on pa.id = p.parcel_id and pa.owner_id = ${ownerId}
    join allowances a on a.parcel_id = p.parcel_id and a.removed_at is null
    join species s on s.id = a.species_id
    join limits l on l.allowance_id = a.id and (l.permit_id is null or l.permit_id = p.id)
    where p.parcel_id = ${parcelId}::uuid and p.state in ('approved', 'active')
      ${permitId ? sql`and p.id = ${permitId}::uuid` : sql``}
      and (l.scope <> 'club-season' or p.holder_club_id is not null)`);
  const byPermit = new Map<string, NamedLimit[]>();
  for (const r of rows) {
    const list = byPermit.get(r.permit_id) ?? [];
    list.push({ speciesName: r.species_name, scope: r.scope, quantity: r.quantity, unit: r.unit });
    byPermit.set(r.permit_id, list);
  }
  return byPermit;
}
