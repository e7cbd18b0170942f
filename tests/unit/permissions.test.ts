import { describe, expect, it } from 'vitest';
import type { Actor, Role } from '../../src/lib/actor';
import { decide, mayEver, permissionTable, type Action, type Rule } from '../../src/lib/permissions';
import { roleEnum } from '../../src/db/schema/enums';

function actor(overrides: Partial<Actor> = {}): Actor {
  return {
    id: 'user-self',
    email: 'self@example.org',
    name: 'Self',
    roles: ['forager'],
    landownerVerified: false,
    stewardOfClubIds: [],
    memberOfClubIds: [],
    ...overrides,
  };
}

const forager = actor();
const landowner = actor({ roles: ['landowner'], landownerVerified: true });
const unverifiedLandowner = actor({ roles: ['forager', 'landowner'], landownerVerified: false });
const steward = actor({ roles: ['forager'], stewardOfClubIds: ['club-own'], memberOfClubIds: ['club-own'] });
const admin = actor({ roles: ['admin'] });

describe('decide', () => {
  it('given no actor, it answers signed-out whatever the action', () => {
    expect(decide(null, 'catalogue:read')).toEqual({ allowed: false, reason: 'signed-out' });
    expect(decide(null, 'parcel:read', { ownerId: 'user-self' })).toEqual({ allowed: false, reason: 'signed-out' });
  });

  it('given a forager on a landowner-only action, it answers forbidden', () => {
    expect(decide(forager, 'parcel:list-own')).toEqual({ allowed: false, reason: 'forbidden' });
    expect(decide(forager, 'parcel:read', { ownerId: forager.id })).toEqual({ allowed: false, reason: 'forbidden' });
  });

  it("given a landowner reading another owner's parcel, it answers not-found", () => {
    expect(decide(landowner, 'parcel:read', { ownerId: 'user-someone-else' })).toEqual({ allowed: false, reason: 'not-found' });
    expect(decide(landowner, 'parcel:edit', { ownerId: null })).toEqual({ allowed: false, reason: 'not-found' });
  });

  it('given a landowner reading their own parcel, it allows it', () => {
    expect(decide(landowner, 'parcel:read', { ownerId: landowner.id })).toEqual({ allowed: true });
    expect(decide(landowner, 'parcel:edit', { ownerId: landowner.id })).toEqual({ allowed: true });
  });

  it('given an unverified landowner, it allows drafting a parcel but answers unverified to granting a permit', () => {
    expect(decide(unverifiedLandowner, 'parcel:draft')).toEqual({ allowed: true });
    expect(decide(unverifiedLandowner, 'permit:grant', { ownerId: unverifiedLandowner.id })).toEqual({ allowed: false, reason: 'unverified' });
    expect(decide(unverifiedLandowner, 'parcel:list-publicly', { ownerId: unverifiedLandowner.id })).toEqual({ allowed: false, reason: 'unverified' });
  });

  it("given an unverified landowner on another owner's parcel, it answers not-found rather than revealing it exists", () => {
    expect(decide(unverifiedLandowner, 'permit:grant', { ownerId: 'user-someone-else' })).toEqual({ allowed: false, reason: 'not-found' });
  });

  it('given a forager, a steward or a landowner, it allows opening a permit card (which permit is the query\'s to decide); an admin alone, not', () => {
    for (const who of [forager, steward, landowner, unverifiedLandowner]) expect(decide(who, 'permit:read-card')).toEqual({ allowed: true });
    expect(decide(admin, 'permit:read-card')).toEqual({ allowed: false, reason: 'forbidden' });
  });

  it('given a verified landowner on their own parcel, it allows granting a permit', () => {
    expect(decide(landowner, 'permit:grant', { ownerId: landowner.id })).toEqual({ allowed: true });
    expect(decide(landowner, 'request:decide', { ownerId: landowner.id })).toEqual({ allowed: true });
  });

  it('given a forager who stewards a club, it allows managing that club and answers not-found for another club', () => {
    expect(decide(steward, 'club:manage', { clubId: 'club-own' })).toEqual({ allowed: true });
    expect(decide(steward, 'club:manage', { clubId: 'club-other' })).toEqual({ allowed: false, reason: 'not-found' });
    expect(decide(steward, 'club:manage', { clubId: null })).toEqual({ allowed: false, reason: 'not-found' });
  });

  it('given a club member who stewards no club, it answers forbidden to managing the club', () => {
    const member = actor({ memberOfClubIds: ['club-own'] });
    expect(decide(member, 'club:manage', { clubId: 'club-own' })).toEqual({ allowed: false, reason: 'forbidden' });
  });

  it('given a forager, it lets them read their own permit and answers not-found for somebody else’s', () => {
    expect(decide(forager, 'permit:read-own', { userId: forager.id })).toEqual({ allowed: true });
    expect(decide(forager, 'permit:read-own', { userId: 'user-someone-else' })).toEqual({ allowed: false, reason: 'not-found' });
  });

  it.each(['catalogue:edit', 'account:list', 'landowner:verify', 'health:read-details'] as const)(
    'given the admin-only action %s, it allows an admin and forbids a verified landowner, a steward and a forager',
    (action) => {
      expect(decide(admin, action)).toEqual({ allowed: true });
      for (const other of [landowner, steward, forager]) expect(decide(other, action)).toEqual({ allowed: false, reason: 'forbidden' });
    },
  );

  it('given a forager, a steward or a landowner, it lets them manage their own calendar feed; an admin alone may not, nor anyone signed out', () => {
    expect(decide(forager, 'calendar-feed:manage-own')).toEqual({ allowed: true });
    expect(decide(steward, 'calendar-feed:manage-own')).toEqual({ allowed: true });
    expect(decide(landowner, 'calendar-feed:manage-own')).toEqual({ allowed: true });
    expect(decide(admin, 'calendar-feed:manage-own')).toEqual({ allowed: false, reason: 'forbidden' });
    expect(decide(null, 'calendar-feed:manage-own')).toEqual({ allowed: false, reason: 'signed-out' });
  });

  it('given reminders:edit-own, it lets a forager, a steward and a landowner (verified or not) keep their own switches, and forbids an admin with no other role', () => {
    for (const someone of [forager, steward, landowner, unverifiedLandowner]) expect(decide(someone, 'reminders:edit-own')).toEqual({ allowed: true });
    expect(decide(admin, 'reminders:edit-own')).toEqual({ allowed: false, reason: 'forbidden' });
  });

  it('given an ownership action without the resource it acts on, it throws', () => {
    expect(() => decide(landowner, 'parcel:read')).toThrow(/parcel:read needs the resource/);
    expect(() => decide(steward, 'club:manage')).toThrow(/club:manage needs the resource/);
  });
});

describe('mayEver', () => {
  it('given no actor, it says no', () => {
    expect(mayEver(null, 'catalogue:read')).toBe(false);
  });

  it('given an ownership action, it answers from the roles alone without needing a resource', () => {
    expect(mayEver(landowner, 'parcel:read')).toBe(true);
    expect(mayEver(steward, 'club:manage')).toBe(true);
    expect(mayEver(forager, 'club:manage')).toBe(false);
  });

  it('given an unverified landowner, it still shows permit granting, which decide then refuses as unverified', () => {
    expect(mayEver(unverifiedLandowner, 'permit:grant')).toBe(true);
  });

  it('given a forager, it hides admin and landowner actions', () => {
    expect(mayEver(forager, 'account:list')).toBe(false);
    expect(mayEver(forager, 'parcel:draft')).toBe(false);
    expect(mayEver(forager, 'field:check-in')).toBe(true);
  });
});

describe('permissionTable', () => {
  /** The stored account roles (the database enum) plus the derived steward role. */
  const existingRoles: Role[] = [...roleEnum.enumValues, 'steward'];

  it.each(Object.keys(permissionTable) as Action[])('given the action %s, it lists at least one role that exists', (action) => {
    const rule: Rule = permissionTable[action];
    expect(rule.roles.length).toBeGreaterThan(0);
    for (const role of rule.roles) expect(existingRoles).toContain(role);
  });

  it('given every role that exists, it lets each one do something', () => {
    const used = new Set(Object.values(permissionTable).flatMap((rule) => rule.roles as readonly Role[]));
    for (const role of existingRoles) expect(used.has(role), role).toBe(true);
  });
});
