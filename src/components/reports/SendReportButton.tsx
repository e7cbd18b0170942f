import { useEffect, useState } from 'react';
import { postJson } from '../api-client';

/**
 * Sends the season report by e-mail (its CSV attached) and says, in place, that it went and to whom:
 * the landowner, and a copy to the sender when they are someone else.
 */
export default function SendReportButton({ action, body, ownerName, ownerEmail, senderEmail }: {
  action: string;
  body: Record<string, unknown>;
  ownerName: string;
  ownerEmail: string;
  senderEmail: string;
}) {
  const [busy, setBusy] = useState(false);
  const [sent, setSent] = useState<string | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const [hydrated, setHydrated] = useState(false);
  useEffect(() => setHydrated(true), []);
  const toSelf = ownerEmail.toLowerCase() === senderEmail.toLowerCase();

  const send = async () => {
    setBusy(true);
    setProblem(null);
    const result = await postJson(action, body);
    setBusy(false);
    if (!result.ok) return setProblem(result.error.message);
    const to = (result.data as { sentTo: string[] }).sentTo;
    const copy = to.find((a) => a.toLowerCase() !== ownerEmail.toLowerCase());
    setSent(
      toSelf
        ? `Sent to you (${ownerEmail}), with the CSV attached.`
        : `Sent to ${ownerName} (${ownerEmail}), with the CSV attached${copy ? `; a copy went to you (${copy})` : ''}.`,
    );
  };

  return (
    <span className="inline-flex max-w-full flex-col gap-1" data-hydrated={hydrated ? 'true' : undefined}>
      <button type="button" className="button" disabled={busy} onClick={send}>
        {busy ? 'Sending…' : toSelf ? 'E-mail it to me' : 'Send to the landowner by e-mail'}
      </button>
      <span role="status" className="text-sm text-moss-800" data-testid="report-sent">{sent}</span>
      {problem && <span role="alert" className="field-error">{problem}</span>}
    </span>
  );
}
