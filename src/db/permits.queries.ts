import { desc, eq, inArray, or, type SQL } from 'drizzle-orm';
import type { Executor } from './client';
import { clubs, parcels, permits } from './schema';

/** Permits a forager holds personally or through an active club membership. */
export async function listPermitsForForager(db: Executor, { userId, clubIds }: { userId: string; clubIds: string[] }) {
  const held: SQL[] = [eq(permits.holderUserId, userId)];
  if (clubIds.length > 0) held.push(inArray(permits.holderClubId, clubIds));
  return db
    .select({
      id: permits.id,
      state: permits.state,
      startsOn: permits.startsOn,
      endsOn: permits.endsOn,
      feeMinor: permits.feeMinor,
      currency: permits.currency,
      feePaidAt: permits.feePaidAt,
      termsAcceptedAt: permits.termsAcceptedAt,
      parcelId: parcels.id,
      parcelName: parcels.name,
      clubName: clubs.name,
    })
    .from(permits)
    .innerJoin(parcels, eq(parcels.id, permits.parcelId))
    .leftJoin(clubs, eq(clubs.id, permits.holderClubId))
    .where(or(...held))
    .orderBy(desc(permits.startsOn));
}
