import { and, asc, desc, eq, inArray, isNull, or, sql, type SQL } from 'drizzle-orm';
import type { AllowanceFacts } from '../lib/field/types';
import type { Executor } from './client';
import { allowances, clubs, limits, parcels, permitEvents, permits, species, users } from './schema';

/**
 * A permit as its card shows it, for the people who may open the card: its holder, a member of the
 * holding club (for a club permit) and the parcel's landowner. Anyone else gets null.
 */
export async function findPermitCard(db: Executor, { permitId, userId, clubIds }: { permitId: string; userId: string; clubIds: string[] }) {
  const mayOpen: SQL[] = [eq(permits.holderUserId, userId), eq(parcels.ownerId, userId)];
  if (clubIds.length > 0) mayOpen.push(inArray(permits.holderClubId, clubIds));
  const [row] = await db
    .select({
      id: permits.id,
      state: permits.state,
      startsOn: permits.startsOn,
      endsOn: permits.endsOn,
      holderUserId: permits.holderUserId,
      holderClubId: permits.holderClubId,
      holderName: sql<string>`coalesce(${clubs.name}, ${users.name}, ${users.email})`,
      parcelId: parcels.id,
      parcelName: parcels.name,
      timeZone: parcels.timeZone,
      ownerId: parcels.ownerId,
    })
    .from(permits)
    .innerJoin(parcels, eq(parcels.id, permits.parcelId))
    .leftJoin(users, eq(users.id, permits.holderUserId))
    .leftJoin(clubs, eq(clubs.id, permits.holderClubId))
    .where(and(eq(permits.id, permitId), or(...mayOpen)));
  if (!row) return null;
  return { ...row, allowances: await listCardAllowances(db, { parcelId: row.parcelId, permitId }) };
}

/** The parcel's allowances now in force, each with the parcel's limits and this permit's own. */
async function listCardAllowances(db: Executor, { parcelId, permitId }: { parcelId: string; permitId: string }): Promise<AllowanceFacts[]> {
  const rows = await db
    .select({
      id: allowances.id,
      speciesId: allowances.speciesId,
      commonName: species.commonName,
      scientificName: species.scientificName,
      seasons: allowances.seasons,
      methods: allowances.methods,
    })
    .from(allowances)
    .innerJoin(species, eq(species.id, allowances.speciesId))
    .where(and(eq(allowances.parcelId, parcelId), isNull(allowances.removedAt)))
    .orderBy(asc(species.commonName));
  if (rows.length === 0) return [];
  const limitRows = await db
    .select({ allowanceId: limits.allowanceId, scope: limits.scope, quantity: sql<string>`trim_scale(${limits.quantity})::text`, unit: limits.unit, permitId: limits.permitId })
    .from(limits)
    .where(and(inArray(limits.allowanceId, rows.map((r) => r.id)), or(isNull(limits.permitId), eq(limits.permitId, permitId))));
  return rows.map(({ id, ...a }) => ({
    ...a,
    limits: limitRows.filter((l) => l.allowanceId === id).map(({ allowanceId: _, ...l }) => l),
    cautions: [],
    lookalikes: [],
  }));
}

/** What a card's check may say of a permit: its state, its last day, and when it was revoked. Nothing else. */
export async function findPermitStanding(db: Executor, { permitId }: { permitId: string }) {
  const [row] = await db
    .select({ state: permits.state, endsOn: permits.endsOn, timeZone: parcels.timeZone })
    .from(permits)
    .innerJoin(parcels, eq(parcels.id, permits.parcelId))
    .where(eq(permits.id, permitId));
  if (!row) return null;
  const [revoked] = await db
    .select({ at: permitEvents.at })
    .from(permitEvents)
    .where(and(eq(permitEvents.permitId, permitId), eq(permitEvents.toState, 'revoked')))
    .orderBy(desc(permitEvents.at))
    .limit(1);
  return { ...row, revokedAt: revoked?.at ?? null };
}
