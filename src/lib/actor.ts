/** Account roles; `steward` is not stored on the account but derived from club memberships. */
export type AccountRole = 'forager' | 'landowner' | 'admin';
export type Role = AccountRole | 'steward';

/** The signed-in person, as the middleware resolves it once per request. */
export type Actor = {
  id: string;
  email: string;
  name: string | null;
  roles: AccountRole[];
  landownerVerified: boolean;
  /** Clubs in which this person is an active steward. */
  stewardOfClubIds: string[];
  /** Clubs in which this person is an active member (stewards included). */
  memberOfClubIds: string[];
};

/** The roles in effect: the account's, plus `steward` while the person stewards a club. */
export function effectiveRoles(actor: Actor): Role[] {
  return actor.stewardOfClubIds.length > 0 ? [...actor.roles, 'steward'] : [...actor.roles];
}

export function hasRole(actor: Actor | null, role: Role): boolean {
  return actor !== null && effectiveRoles(actor).includes(role);
}
