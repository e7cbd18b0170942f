import { useEffect, useId, useState } from 'react';
import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import type { z } from 'zod';
import { inviteMemberSchema } from '../../lib/clubs.schemas';
import { postJson } from '../api-client';

export type ClubMember = {
  membershipId: string;
  userId: string;
  name: string | null;
  email: string;
  role: 'member' | 'steward';
  state: 'invited' | 'active' | 'left' | 'removed';
  /** The day they joined in words, on the club's land calendar (src/pages/club.astro); null when they have not. */
  joinedOn: string | null;
};

export type MembersPanelProps = {
  clubId: string;
  members: ClubMember[];
  /** A steward cannot remove or demote themselves from here. */
  currentUserId: string;
};

type Action = 'remove' | 'make-steward' | 'make-member';
type Input = z.input<typeof inviteMemberSchema>;
type Output = z.output<typeof inviteMemberSchema>;

const stateWords: Record<ClubMember['state'], string> = { invited: 'invited', active: 'active', left: 'left the club', removed: 'removed' };
const stateTones: Record<ClubMember['state'], string> = {
  invited: 'border-loam-400 text-loam-700', active: 'border-moss-500 bg-moss-50 text-moss-800', left: 'border-loam-300 text-loam-600', removed: 'border-loam-300 text-loam-600',
};
/** Current members first, then open invitations, then past members: nobody drops off the list. */
const stateOrder: Record<ClubMember['state'], number> = { active: 0, invited: 1, left: 2, removed: 3 };
const isCurrent = (m: ClubMember) => m.state === 'active' || m.state === 'invited';

/** The club's members past and present, the invitation form, and a steward's actions on each membership. */
export default function MembersPanel({ clubId, members, currentUserId }: MembersPanelProps) {
  const [problem, setProblem] = useState<string | null>(null);
  const [busy, setBusy] = useState<string | null>(null);
  const [hydrated, setHydrated] = useState(false);
  useEffect(() => setHydrated(true), []);
  const listed = [...members].sort((a, b) => stateOrder[a.state] - stateOrder[b.state]);

  async function act(member: ClubMember, action: Action) {
    setBusy(`${member.membershipId}:${action}`);
    setProblem(null);
    const result = await postJson(`/api/clubs/${clubId}/members/${member.membershipId}`, { action });
    if (result.ok) return window.location.reload();
    setBusy(null);
    setProblem(result.error.message);
  }

  const button = (member: ClubMember, action: Action, label: string) => (
    <button type="button" className="button-quiet whitespace-nowrap" disabled={busy !== null} onClick={() => void act(member, action)}>
      {busy === `${member.membershipId}:${action}` ? 'Working…' : label}
    </button>
  );

  return (
    <div data-testid="members-panel" data-hydrated={hydrated ? 'true' : undefined}>
      {problem && <p role="alert" className="field-error mb-2">{problem}</p>}
      <div className="relative overflow-x-auto rounded-lg border border-loam-200 bg-white">
        <table className="table">
          <caption className="sr-only">Members of the club, past members included</caption>
          <thead>
            <tr>
              <th scope="col">Name</th><th scope="col">E-mail</th><th scope="col">Role</th><th scope="col">Membership</th><th scope="col">Joined</th>
              <th scope="col"><span className="sr-only">Actions</span></th>
            </tr>
          </thead>
          <tbody>
            {listed.length === 0 && <tr><td colSpan={6} className="text-loam-700">Nobody has joined yet. Invite someone below.</td></tr>}
            {listed.map((m) => (
              <tr key={m.membershipId} data-membership={m.membershipId} data-state={m.state} className={isCurrent(m) ? '' : 'bg-loam-50 text-loam-700'}>
                <td className="font-medium">
                  {m.name ?? <span className="italic text-loam-600">no name yet</span>}
                  {m.userId === currentUserId && <span className="ml-1 text-xs font-normal text-loam-600">(you)</span>}
                </td>
                <td>{m.email}</td>
                <td>{m.role}</td>
                <td>
                  <span className={`pill ${stateTones[m.state]}`}>{stateWords[m.state]}</span>
                  {!isCurrent(m) && <span className="block text-xs text-loam-600">past member</span>}
                </td>
                <td className="whitespace-nowrap">{m.joinedOn ?? (m.state === 'invited' ? 'not yet' : '—')}</td>
                <td>
                  {isCurrent(m) && m.userId !== currentUserId && (
                    <span className="flex flex-wrap gap-2">
                      {button(m, 'remove', m.state === 'invited' ? 'Withdraw invitation' : 'Remove')}
                      {m.role === 'member' ? button(m, 'make-steward', 'Make steward') : button(m, 'make-member', 'Make member')}
                    </span>
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <InviteForm clubId={clubId} />
    </div>
  );
}

function InviteForm({ clubId }: { clubId: string }) {
  const id = useId();
  const { register, handleSubmit, setError, formState } = useForm<Input, unknown, Output>({
    resolver: zodResolver(inviteMemberSchema),
    defaultValues: { email: '', role: 'member' },
  });
  const { errors, isSubmitting } = formState;

  const onSubmit = handleSubmit(async (input) => {
    const result = await postJson(`/api/clubs/${clubId}/members`, input);
    if (result.ok) return window.location.reload();
    const field = result.error.field;
    setError(field === 'email' || field === 'role' ? field : 'root', { message: result.error.message });
  });

  return (
    <form onSubmit={onSubmit} noValidate className="card mt-4 space-y-3" data-testid="invite-member">
      <h3 className="font-semibold text-moss-800">Invite someone</h3>
      <p className="text-sm text-loam-700">They get an e-mail and accept from the Club page once signed in.</p>
      {errors.root && <p role="alert" className="field-error">{errors.root.message}</p>}
      <div className="flex flex-wrap items-start gap-3">
        <div className="min-w-[16rem] flex-1">
          <label htmlFor={`${id}-email`} className="field-label">E-mail</label>
          <input
            id={`${id}-email`} type="email" inputMode="email" autoComplete="off" className="field-input" placeholder="name@example.org"
            aria-invalid={errors.email ? 'true' : 'false'} aria-describedby={errors.email ? `${id}-email-error` : undefined} {...register('email')}
          />
          {errors.email && <p id={`${id}-email-error`} role="alert" className="field-error">{errors.email.message}</p>}
        </div>
        <div>
          <label htmlFor={`${id}-role`} className="field-label">Role</label>
          <select
            id={`${id}-role`} className="field-input" aria-invalid={errors.role ? 'true' : 'false'}
            aria-describedby={errors.role ? `${id}-role-error` : undefined} {...register('role')}
          >
            <option value="member">member</option>
            <option value="steward">steward</option>
          </select>
          {errors.role && <p id={`${id}-role-error`} role="alert" className="field-error">{errors.role.message}</p>}
        </div>
      </div>
      <button type="submit" className="button" disabled={isSubmitting}>{isSubmitting ? 'Sending…' : 'Send invitation'}</button>
    </form>
  );
}
