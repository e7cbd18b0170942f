import { useState } from 'react';
import { landownerDecisionSchema } from '../lib/accounts.schemas';
import { postJson } from './api-client';
import { useHydrated } from './useHydrated';

/**
 * The admin's answer to a landowner: verify, or decline with a reason. Nothing is sent until the
 * admin confirms; the landowner is then e-mailed the outcome.
 */
export default function LandownerDecisionForm({ userId, name, email }: { userId: string; name: string; email: string }) {
  const hydrated = useHydrated();
  const [outcome, setOutcome] = useState<'verified' | 'declined'>('verified');
  const [reason, setReason] = useState('');
  const [confirming, setConfirming] = useState(false);
  const [busy, setBusy] = useState(false);
  const [problem, setProblem] = useState<{ field: string; message: string } | null>(null);

  const decision = outcome === 'verified' ? { outcome } : { outcome, reason };
  const review = () => {
    const parsed = landownerDecisionSchema.safeParse(decision);
    if (!parsed.success) {
      const issue = parsed.error.issues[0];
      return setProblem({ field: issue?.path.join('.') || 'root', message: issue?.message ?? 'Check the answer.' });
    }
    setProblem(null);
    setConfirming(true);
  };
  const send = async () => {
    setBusy(true);
    const result = await postJson(`/api/accounts/${userId}/landowner-decision`, decision);
    setBusy(false);
    if (result.ok) return window.location.assign(`/accounts?outcome=${outcome}`);
    setConfirming(false);
    setProblem({ field: result.error.field ?? 'root', message: result.error.message });
  };

  if (confirming) {
    return (
      <div role="alertdialog" aria-labelledby="confirm-heading" className="space-y-3 rounded-md border border-ember-500 bg-ember-50 p-4" data-hydrated={hydrated ? 'true' : undefined}>
        <p id="confirm-heading" className="font-semibold">
          {outcome === 'verified' ? `Verify ${name} as a landowner?` : `Decline to verify ${name}?`}
        </p>
        <p className="text-sm">
          {outcome === 'verified'
            ? `They will be able to list parcels and grant permits at once, and ${email} is e-mailed that they are verified.`
            : `${email} is e-mailed your reason: “${reason.trim()}”. They stay an unverified landowner and you can verify them later.`}
        </p>
        <div className="flex flex-wrap gap-2">
          <button type="button" className="button" disabled={busy} onClick={send}>{busy ? 'Sending…' : outcome === 'verified' ? 'Yes, verify and e-mail them' : 'Yes, decline and e-mail them'}</button>
          <button type="button" className="button-quiet" disabled={busy} onClick={() => setConfirming(false)}>Go back</button>
        </div>
      </div>
    );
  }

  return (
    <form className="space-y-4" noValidate data-hydrated={hydrated ? 'true' : undefined} onSubmit={(e) => { e.preventDefault(); review(); }}>
      <fieldset className="space-y-2">
        <legend className="field-label">Outcome</legend>
        <label className="flex items-center gap-2 text-sm">
          <input type="radio" name="outcome" className="accent-moss-600" checked={outcome === 'verified'} onChange={() => setOutcome('verified')} />
          Verify: they manage the land they claim
        </label>
        <label className="flex items-center gap-2 text-sm">
          <input type="radio" name="outcome" className="accent-moss-600" checked={outcome === 'declined'} onChange={() => setOutcome('declined')} />
          Decline for now, with a reason
        </label>
      </fieldset>
      {outcome === 'declined' && (
        <div>
          <label htmlFor="decline-reason" className="field-label">Reason (sent to them)</label>
          <textarea id="decline-reason" rows={3} className="field-input" value={reason} aria-invalid={problem?.field === 'reason' ? 'true' : 'false'} onChange={(e) => setReason(e.target.value)} />
          {problem?.field === 'reason' && <p role="alert" className="field-error">{problem.message}</p>}
        </div>
      )}
      {problem && problem.field !== 'reason' && <p role="alert" className="field-error">{problem.message}</p>}
      <button type="submit" className="button">{outcome === 'verified' ? 'Verify…' : 'Decline…'}</button>
    </form>
  );
}
