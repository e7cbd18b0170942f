import { useCallback, useEffect, useState, type ReactNode } from 'react';
import type { JSONWebKeySet } from 'jose';
import { formatDate, formatInstantIn } from '../../lib/format';
import { localDate } from '../../lib/local-time';
import type { PermitStanding } from '../../lib/permit-states';
import { tokenFrom, verifyFailureWords, verifyPermitStatement, type Verified } from '../../lib/permit-statement';

/**
 * Checks a permit card's code in the browser with the public keys the page carries, so it works with
 * no network once the page has been opened; with a connection it also asks whether the permit is
 * still active. The code comes from the link a QR code opens (/verify#…) or is pasted.
 */
type Props = { keys: JSONWebKeySet; statusUrl: string };

type Status =
  | { kind: 'idle' }
  | { kind: 'checking' }
  | { kind: 'answered'; standing: PermitStanding & { today: string } }
  | { kind: 'unreachable' }
  | { kind: 'refused'; message: string };

const statusTimeoutMs = 8000;

async function askStatus(statusUrl: string, token: string): Promise<Status> {
  let response: Response;
  try {
    response = await fetch(`${statusUrl}?token=${encodeURIComponent(token)}`, { cache: 'no-store', signal: AbortSignal.timeout(statusTimeoutMs) });
  } catch {
    return { kind: 'unreachable' };
  }
  const body = (await response.json().catch(() => null)) as { state?: string; error?: { message?: string } } | null;
  if (response.ok && body?.state) return { kind: 'answered', standing: body as PermitStanding & { today: string } };
  if (response.status >= 500 || !body) return { kind: 'unreachable' };
  return { kind: 'refused', message: body.error?.message ?? 'Tallywood could not say how this permit stands.' };
}

export default function VerifyPermit({ keys, statusUrl }: Props) {
  const [hydrated, setHydrated] = useState(false);
  const [text, setText] = useState('');
  const [verified, setVerified] = useState<Verified | null>(null);
  const [status, setStatus] = useState<Status>({ kind: 'idle' });

  const check = useCallback(
    async (input: string) => {
      const token = tokenFrom(input);
      setStatus({ kind: 'idle' });
      if (!token) return setVerified(null);
      const result = await verifyPermitStatement(token, keys);
      setVerified(result);
      if (!result.ok) return;
      setStatus({ kind: 'checking' });
      setStatus(await askStatus(statusUrl, token));
    },
    [keys, statusUrl],
  );

  useEffect(() => {
    setHydrated(true);
    const fromHash = () => {
      const token = window.location.hash.slice(1);
      if (!token) return;
      setText(token);
      void check(token);
    };
    fromHash();
    window.addEventListener('hashchange', fromHash);
    return () => window.removeEventListener('hashchange', fromHash);
  }, [check]);

  return (
    <div data-hydrated={hydrated ? 'true' : undefined} data-testid="verify">
      <form
        className="space-y-2"
        onSubmit={(event) => {
          event.preventDefault();
          void check(text);
        }}
      >
        <label htmlFor="permit-code" className="field-label">Code from a permit card</label>
        <textarea id="permit-code" className="field-input h-28 break-all font-mono text-xs" value={text} onChange={(e) => setText(e.target.value)} placeholder="Paste the code, or the link the card's QR code opens" />
        <button type="submit" className="button">Check this card</button>
      </form>
      {verified && <Result verified={verified} status={status} />}
    </div>
  );
}

function Result({ verified, status }: { verified: Verified; status: Status }) {
  if (!verified.ok) {
    return (
      <section className="mt-6 rounded-md border-2 border-ember-500 bg-ember-50 p-4" data-testid="signature" data-signed="false" aria-live="polite">
        <h2 className="text-ember-700">✕ Not signed by Tallywood</h2>
        <p className="mt-1 text-sm">{verifyFailureWords[verified.reason]}</p>
      </section>
    );
  }
  const s = verified.statement;
  const today = localDate(new Date(), s.tz);
  return (
    <section className="mt-6 space-y-4" aria-live="polite">
      <div className="rounded-md border-2 border-moss-500 bg-moss-50 p-4" data-testid="signature" data-signed="true">
        <h2 className="text-moss-800">✓ Signed by Tallywood</h2>
        <p className="mt-1 text-sm">This statement was signed with Tallywood's key ({verified.kid}) and has not been changed since.</p>
      </div>
      <StatusBox status={status} from={s.from} to={s.to} today={today} issued={formatInstantIn(new Date(s.iat * 1000), s.tz)} />
      <dl className="card grid grid-cols-[auto_1fr] gap-x-4 gap-y-2 text-sm" data-testid="statement">
        <dt className="font-semibold">Holder</dt>
        <dd>{s.holder}{s.club ? ' (club): for its members' : ''}</dd>
        <dt className="font-semibold">Parcel</dt>
        <dd>{s.parcel}</dd>
        <dt className="font-semibold">Dates</dt>
        <dd>{formatDate(s.from)} – {formatDate(s.to)} <span className="text-xs text-loam-600">(the parcel's calendar, {s.tz})</span></dd>
        <dt className="font-semibold">Species</dt>
        <dd><ul className="space-y-1">{s.species.map((line) => <li key={line}>{line}</li>)}</ul></dd>
        <dt className="font-semibold">Issued</dt>
        <dd>{formatInstantIn(new Date(s.iat * 1000), s.tz)}</dd>
        <dt className="font-semibold">Permit</dt>
        <dd className="break-all font-mono text-xs">{s.permit}</dd>
      </dl>
    </section>
  );
}

function StatusBox({ status, from, to, today, issued }: { status: Status; from: string; to: string; today: string; issued: string }) {
  const byDate = today > to ? `Its last day, ${formatDate(to)}, has passed.` : today < from ? `It begins on ${formatDate(from)}.` : null;
  const box = (state: string, tone: string, children: ReactNode) => (
    <div className={`rounded-md border p-4 ${tone}`} data-testid="status" data-state={state}>{children}</div>
  );
  switch (status.kind) {
    case 'idle':
    case 'checking':
      return box('checking', 'border-loam-200', <p>Asking Tallywood whether this permit is still active…</p>);
    case 'unreachable':
      return box('unknown', 'border-loam-400 bg-lichen-100', (
        <>
          <p className="font-semibold">Could not check the current status: Tallywood cannot be reached from here.</p>
          <p className="mt-1 text-sm">The signature is genuine, so Tallywood issued this permit ({issued}); it may have been revoked since. {byDate}</p>
        </>
      ));
    case 'refused':
      return box('unknown', 'border-ember-500', <p>{status.message}</p>);
    case 'answered': {
      const s = status.standing;
      if (s.state === 'active') return box('active', 'border-moss-500 bg-moss-50', <p className="font-semibold">Active: Tallywood confirms this permit is active today ({formatDate(s.today)} on the parcel's calendar), to {formatDate(s.lastDay)}.</p>);
      if (s.state === 'revoked') return box('revoked', 'border-ember-500 bg-ember-50', <p className="font-semibold text-ember-700">Revoked since {formatDate(s.since)}: this permit no longer allows harvesting.</p>);
      if (s.state === 'expired') return box('expired', 'border-loam-400 bg-loam-50', <p className="font-semibold">Expired: this permit ended on {formatDate(s.lastDay)}.</p>);
      return box(s.state, 'border-loam-400', <p className="font-semibold">This permit is {s.state}: it does not allow harvesting.</p>);
    }
  }
}
