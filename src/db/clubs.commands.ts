import { and, eq, sql } from 'drizzle-orm';
import { AppError, invalidInput, notFound } from '../lib/errors';
import { createAccount, findUserByEmail } from './accounts.queries';
import type { Tx } from './client';
import { auditEvents, clubMemberships } from './schema';

type Role = 'member' | 'steward';

async function record(tx: Tx, { actorId, action, membershipId, detail, now }: { actorId: string; action: string; membershipId: string; detail: Record<string, unknown>; now: Date }) {
  await tx.insert(auditEvents).values({ actorId, action, subjectType: 'club-membership', subjectId: membershipId, detail, at: now });
}

async function lockMembership(tx: Tx, membershipId: string) {
  const [row] = await tx.select().from(clubMemberships).where(eq(clubMemberships.id, membershipId)).for('update');
  return row ?? null;
}

/** A club is never left without an active steward: the last one must hand over first. */
async function refuseLastSteward(tx: Tx, { clubId, membershipId }: { clubId: string; membershipId: string }) {
  const [row] = await tx.execute<{ others: number }>(sql`
    select count(*)::int as others from club_memberships
    where club_id = ${clubId}::uuid and role = 'steward' and state = 'active' and id <> ${membershipId}::uuid`);
  if ((row?.others ?? 0) === 0) throw new AppError(409, 'last-steward', 'A club needs an active steward: make another member a steward first.');
}

/**
 * A steward invites someone by e-mail (an account is made for an address Tallywood does not know).
 * Someone who left or was removed may be invited again; the earlier changes stay in the audit trail.
 */
export async function inviteMember(tx: Tx, { clubId, email, role, invitedBy, now }: { clubId: string; email: string; role: Role; invitedBy: string; now: Date }) {
  let user = await findUserByEmail(tx, { email });
  let newAccount = false;
  if (!user) {
    user = await createAccount(tx, { email, name: email.split('@')[0] ?? email, managesLand: false });
    newAccount = true;
  }
  if (!user) throw invalidInput('email', 'That address could not be used; try again.');
  const [existing] = await tx.select().from(clubMemberships).where(and(eq(clubMemberships.clubId, clubId), eq(clubMemberships.userId, user.id))).for('update');
  let membershipId: string;
  if (existing) {
    if (existing.state === 'active') throw new AppError(409, 'already-member', `${email} is already a member of this club.`, 'email');
    if (existing.state === 'invited') throw new AppError(409, 'already-invited', `${email} has been invited already and has not answered yet.`, 'email');
    await tx.update(clubMemberships).set({ state: 'invited', role, invitedBy, joinedAt: null, endedAt: null }).where(eq(clubMemberships.id, existing.id));
    membershipId = existing.id;
  } else {
    const [created] = await tx.insert(clubMemberships).values({ clubId, userId: user.id, role, state: 'invited', invitedBy, createdAt: now }).returning({ id: clubMemberships.id });
    if (!created) throw new Error('the membership was not saved');
    membershipId = created.id;
  }
  await record(tx, { actorId: invitedBy, action: 'invited', membershipId, detail: { email, role }, now });
  return { membershipId, userId: user.id, email: user.email, newAccount };
}

/** The invitee accepts (active from now) or declines (recorded as left). Only their own invitation. */
export async function answerInvitation(tx: Tx, { membershipId, userId, accept, now }: { membershipId: string; userId: string; accept: boolean; now: Date }) {
  const membership = await lockMembership(tx, membershipId);
  if (!membership || membership.userId !== userId) throw notFound('Invitation');
  if (membership.state !== 'invited') throw new AppError(409, 'not-invited', 'This invitation has already been answered or withdrawn.');
  await tx
    .update(clubMemberships)
    .set(accept ? { state: 'active', joinedAt: now, endedAt: null } : { state: 'left', endedAt: now })
    .where(eq(clubMemberships.id, membershipId));
  await record(tx, { actorId: userId, action: accept ? 'accepted' : 'declined', membershipId, detail: {}, now });
  return membership.clubId;
}

/** A member leaves. Their entries and the club's tallies keep them: history is never rewritten. */
export async function leaveClub(tx: Tx, { membershipId, userId, now }: { membershipId: string; userId: string; now: Date }) {
  const membership = await lockMembership(tx, membershipId);
  if (!membership || membership.userId !== userId) throw notFound('Membership');
  if (membership.state !== 'active') throw new AppError(409, 'not-active', 'You are not an active member of this club.');
  if (membership.role === 'steward') await refuseLastSteward(tx, { clubId: membership.clubId, membershipId });
  await tx.update(clubMemberships).set({ state: 'left', endedAt: now }).where(eq(clubMemberships.id, membershipId));
  await record(tx, { actorId: userId, action: 'left', membershipId, detail: {}, now });
}

/** What a steward may do to a membership of their club: remove it (or withdraw an invitation), or change its role. */
export async function manageMembership(
  tx: Tx,
  { clubId, membershipId, action, by, now }: { clubId: string; membershipId: string; action: 'remove' | 'make-steward' | 'make-member'; by: string; now: Date },
) {
  const membership = await lockMembership(tx, membershipId);
  if (!membership || membership.clubId !== clubId) throw notFound('Membership');
  if (action === 'remove') {
    if (membership.userId === by) throw new AppError(409, 'remove-self', 'To step down, leave the club from your own memberships instead.');
    if (membership.state !== 'active' && membership.state !== 'invited') throw new AppError(409, 'not-active', 'That membership has already ended.');
    if (membership.role === 'steward' && membership.state === 'active') await refuseLastSteward(tx, { clubId, membershipId });
    await tx.update(clubMemberships).set({ state: 'removed', endedAt: now }).where(eq(clubMemberships.id, membershipId));
  } else {
    const role: Role = action === 'make-steward' ? 'steward' : 'member';
    if (membership.state !== 'active' && membership.state !== 'invited') throw new AppError(409, 'not-active', 'That membership has ended; invite them again first.');
    if (membership.role === role) return;
    if (role === 'member' && membership.state === 'active') await refuseLastSteward(tx, { clubId, membershipId });
    await tx.update(clubMemberships).set({ role }).where(eq(clubMemberships.id, membershipId));
  }
  await record(tx, { actorId: by, action, membershipId, detail: {}, now });
}
