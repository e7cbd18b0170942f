/** Permit states and the moves between them (DESIGN.md: requested → approved → active → expired or revoked). */
export type PermitState = 'requested' | 'approved' | 'active' | 'expired' | 'revoked' | 'declined';

/** Who may make each move: the parcel's landowner, or the system once conditions hold. */
export const permitTransitions: Record<PermitState, Partial<Record<PermitState, 'landowner' | 'system'>>> = {
  requested: { approved: 'landowner', declined: 'landowner' },
  approved: { active: 'system', revoked: 'landowner', expired: 'system' },
  active: { revoked: 'landowner', expired: 'system' },
  expired: {},
  revoked: {},
  declined: {},
};

export function mayMove(from: PermitState, to: PermitState, by: 'landowner' | 'system'): boolean {
  return permitTransitions[from][to] === by;
}

export type Missing = 'terms' | 'fee' | 'start-date';

/**
 * What an approved permit still lacks before it is active: the parcel's current terms accepted
 * (when the parcel has terms), the fee paid (when there is one), and its first day reached.
 */
export function missingForActive(
  permit: { feeMinor: number | null; feePaidAt: Date | null; acceptedTermsId: string | null; startsOn: string },
  context: { currentTermsId: string | null; today: string },
): Missing[] {
  const missing: Missing[] = [];
  if (context.currentTermsId && permit.acceptedTermsId !== context.currentTermsId) missing.push('terms');
  if ((permit.feeMinor ?? 0) > 0 && !permit.feePaidAt) missing.push('fee');
  if (permit.startsOn > context.today) missing.push('start-date');
  return missing;
}

export const missingLabels: Record<Missing, string> = {
  terms: "accept the parcel's current terms",
  fee: 'pay the access fee',
  'start-date': 'wait for the first day of the permit',
};

/**
 * How a permit stands on a day, as a permit card's check answers it: `active`, `expired` (its last
 * day has passed, even before the date-changes job records it), `revoked` (with the parcel-local day it
 * was revoked), or another state, which a card is never made for.
 */
export type PermitStanding =
  | { state: 'active'; lastDay: string }
  | { state: 'expired'; lastDay: string }
  | { state: 'revoked'; since: string }
  | { state: Exclude<PermitState, 'active' | 'expired' | 'revoked'> };

export function permitStanding(
  permit: { state: PermitState; endsOn: string; revokedOn: string | null },
  today: string,
): PermitStanding {
  if (permit.state === 'revoked') return { state: 'revoked', since: permit.revokedOn ?? today };
  if (permit.state === 'expired' || ((permit.state === 'active' || permit.state === 'approved') && permit.endsOn < today)) return { state: 'expired', lastDay: permit.endsOn };
  if (permit.state === 'active') return { state: 'active', lastDay: permit.endsOn };
  return { state: permit.state };
}
