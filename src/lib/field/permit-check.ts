import { missingLabels, type Missing } from '../permit-states';
import { formatDay, joinWords } from './words';
import type { Forager, ParcelFacts, PermitFacts } from './types';

/** What the permit check reads of a parcel: everything but its shape. */
type PermitParcel = Omit<ParcelFacts, 'boundary' | 'zones'>;

/**
 * Step 3 of the verdict (DESIGN.md): an active permit for this parcel covering this forager —
 * held personally or by a club the forager belongs to — valid on the local date, fee settled and
 * the parcel's current terms accepted. When none is, say what is missing and how to ask.
 */

export type PermitCheck = { permit: PermitFacts; reasons: [] } | { permit: null; reasons: string[] };

export function permitCovers(permit: PermitFacts, forager: Forager): boolean {
  return permit.holderUserId === forager.id || (permit.holderClubId !== null && forager.clubIds.includes(permit.holderClubId));
}

/** What stands between a covering permit and harvesting today; empty when it is good. */
function missingOn(permit: PermitFacts, parcel: PermitParcel, localDate: string): Missing[] {
  const missing: Missing[] = [];
  if (parcel.currentTermsId !== null && permit.acceptedTermsId !== parcel.currentTermsId) missing.push('terms');
  if ((permit.feeMinor ?? 0) > 0 && !permit.feePaid) missing.push('fee');
  if (permit.startsOn > localDate) missing.push('start-date');
  return missing;
}

/**
 * A permit is good today when it is active (or approved with nothing left to do, so that it becomes
 * active the moment the system next looks: a field pack can hold the state from before its first
 * day), today lies within its dates, and nothing is missing. Active already implies terms and fee,
 * but the parcel's terms may have changed since, so both are checked again.
 */
function isGood(permit: PermitFacts, parcel: PermitParcel, localDate: string): boolean {
  return (permit.state === 'active' || permit.state === 'approved') && permit.endsOn >= localDate && missingOn(permit, parcel, localDate).length === 0;
}

const stateRank: Record<PermitFacts['state'], number> = { active: 0, approved: 1, requested: 2, expired: 3, revoked: 4, declined: 5 };

/** The covering permit worth explaining: the most advanced state, then the one whose dates come nearest today. */
function closest(permits: PermitFacts[], localDate: string): PermitFacts | undefined {
  const nearestDay = (p: PermitFacts) => (p.startsOn > localDate ? p.startsOn : p.endsOn < localDate ? p.endsOn : localDate);
  const gap = (p: PermitFacts) => Math.abs(Date.parse(`${nearestDay(p)}T00:00:00Z`) - Date.parse(`${localDate}T00:00:00Z`));
  return [...permits].sort((x, y) => stateRank[x.state] - stateRank[y.state] || gap(x) - gap(y))[0];
}

/** Plain sentences for a covering permit that is not good today. */
function explain(permit: PermitFacts, parcel: PermitParcel, localDate: string): string[] {
  const whose = permit.holderUserId === null ? "Your club's permit" : 'Your permit';
  const on = `for ${parcel.name}`;
  switch (permit.state) {
    case 'requested':
      return [`Your request for access to ${parcel.name} is waiting for the landowner's answer; you can follow it in My permits.`];
    case 'declined':
      return [`The landowner declined the request for access to ${parcel.name}. You can ask again from My permits.`];
    case 'revoked':
      return [`${whose} ${on} was revoked. Ask the landowner from My permits if you need access again.`];
    default:
      break;
  }
  if (permit.state === 'expired' || permit.endsOn < localDate) {
    return [`${whose} ${on} ended on ${formatDay(permit.endsOn)}. Ask the landowner for a new one from My permits.`];
  }
  const missing = missingOn(permit, parcel, localDate);
  const reasons: string[] = [];
  if (missing.includes('start-date')) reasons.push(`${whose} ${on} begins on ${formatDay(permit.startsOn)}.`);
  const steps = missing.filter((m) => m !== 'start-date');
  if (steps.length > 0) {
    const termsChanged = permit.state === 'active' && steps.length === 1 && steps[0] === 'terms' && permit.acceptedTermsId !== null;
    reasons.push(
      termsChanged
        ? `The terms of ${parcel.name} have changed since they were accepted: ${missingLabels.terms} from My permits.`
        : `${whose} ${on} is not active yet: ${joinWords(steps.map((m) => missingLabels[m]), 'and')}, from My permits.`,
    );
  }
  return reasons;
}

/** The permit in force for this forager on this parcel on a local date, or why there is none. */
export function checkPermit(parcel: PermitParcel, forager: Forager, localDate: string): PermitCheck {
  const covering = parcel.permits.filter((p) => permitCovers(p, forager));
  const good = covering.filter((p) => isGood(p, parcel, localDate));
  // A personal permit before a club's: its own limits are the forager's own terms.
  const chosen = good.find((p) => p.holderUserId === forager.id) ?? good[0];
  if (chosen) return { permit: chosen, reasons: [] };
  const nearest = closest(covering, localDate);
  if (!nearest) return { permit: null, reasons: ['You have no permit here. Ask the landowner from My permits.'] };
  return { permit: null, reasons: explain(nearest, parcel, localDate) };
}
