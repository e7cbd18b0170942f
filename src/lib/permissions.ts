import { effectiveRoles, type Actor, type Role } from './actor';

/**
 * Who may do what, as data. `ownership` names how a resource is tied to the actor:
 * `owner` (the resource's ownerId is the actor), `club` (the actor stewards the resource's club),
 * `self` (the resource's userId is the actor). `verified` asks for an admin-verified landowner.
 */
export type Rule = { roles: readonly Role[]; verified?: boolean; ownership?: 'owner' | 'club' | 'self' };

export const permissionTable = {
  'field:check-in': { roles: ['forager'] },
  'ledger:read-own': { roles: ['forager'] },
  'permit:read-own': { roles: ['forager'], ownership: 'self' },
  'permit:request': { roles: ['forager', 'steward'] },
  /** A private calendar feed of one's own permits, seasons and closures: make, replace or turn it off. */
  'calendar-feed:manage-own': { roles: ['forager', 'steward', 'landowner'] },
  /** A permit card: its holder, a member of the holding club, or the parcel's landowner (the query decides which permit). */
  'permit:read-card': { roles: ['forager', 'steward', 'landowner'] },
  'parcel:list-own': { roles: ['landowner'] },
  'parcel:draft': { roles: ['landowner'] },
  'parcel:read': { roles: ['landowner'], ownership: 'owner' },
  'parcel:edit': { roles: ['landowner'], ownership: 'owner' },
  'parcel:list-publicly': { roles: ['landowner'], verified: true, ownership: 'owner' },
  'permit:grant': { roles: ['landowner'], verified: true, ownership: 'owner' },
  'request:decide': { roles: ['landowner'], verified: true, ownership: 'owner' },
  'club:join': { roles: ['forager', 'steward'] },
  'club:read': { roles: ['steward'], ownership: 'club' },
  'report:read': { roles: ['landowner', 'steward'] },
  'club:manage': { roles: ['steward'], ownership: 'club' },
  'catalogue:read': { roles: ['forager', 'landowner', 'steward', 'admin'] },
  'catalogue:edit': { roles: ['admin'] },
  'account:list': { roles: ['admin'] },
  'landowner:verify': { roles: ['admin'] },
  /** The job queue's and the outbox's counts in /api/health: the running of the service, for its admins. */
  'health:read-details': { roles: ['admin'] },
  /** Their own reminder e-mails' switches: anyone a reminder can be sent to (a permit holder, a club member, a landowner). */
  'reminders:edit-own': { roles: ['forager', 'landowner', 'steward'] },
} as const satisfies Record<string, Rule>;

export type Action = keyof typeof permissionTable;

/** What a resource tells the checker about whom it belongs to. */
export type Resource = { ownerId?: string | null; clubId?: string | null; userId?: string | null };

/**
 * `signed-out`: no session (401). `forbidden`: the role does not allow it (403).
 * `unverified`: a landowner action that needs admin verification (403).
 * `not-found`: someone else's resource, answered as if it did not exist (404).
 */
export type Decision = { allowed: true } | { allowed: false; reason: 'signed-out' | 'forbidden' | 'unverified' | 'not-found' };

export function decide(actor: Actor | null, action: Action, resource?: Resource): Decision {
  if (!actor) return { allowed: false, reason: 'signed-out' };
  const rule: Rule = permissionTable[action];
  const roles = effectiveRoles(actor);
  if (!rule.roles.some((role) => roles.includes(role))) return { allowed: false, reason: 'forbidden' };
  if (rule.ownership) {
    if (!resource) throw new Error(`${action} needs the resource it acts on`);
    if (!owns(actor, rule.ownership, resource)) return { allowed: false, reason: 'not-found' };
  }
  if (rule.verified && !actor.landownerVerified) return { allowed: false, reason: 'unverified' };
  return { allowed: true };
}

function owns(actor: Actor, ownership: NonNullable<Rule['ownership']>, resource: Resource): boolean {
  switch (ownership) {
    case 'owner':
      return resource.ownerId === actor.id;
    case 'self':
      return resource.userId === actor.id;
    case 'club':
      return resource.clubId != null && actor.stewardOfClubIds.includes(resource.clubId);
  }
}

/** Whether the actor's roles allow the action on some resource of their own; builds navigation. */
export function mayEver(actor: Actor | null, action: Action): boolean {
  if (!actor) return false;
  const rule: Rule = permissionTable[action];
  const roles = effectiveRoles(actor);
  return rule.roles.some((role) => roles.includes(role));
}
