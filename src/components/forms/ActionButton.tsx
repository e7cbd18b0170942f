import { useState } from 'react';
import { sendJson } from '../api-client';

/** A button that sends one request (remove a closure, accept terms …) and reloads, or shows why not. */
export default function ActionButton({ action, method = 'POST', body = {}, label, confirm, quiet = true, redirectToResponseUrl = false }: {
  action: string;
  /** The JSON a POST sends; an empty object unless the endpoint asks for more. */
  body?: Record<string, unknown>;
  method?: 'POST' | 'DELETE';
  label: string;
  confirm?: string;
  quiet?: boolean;
  /** For checkout: the answer carries a `url` to open. */
  redirectToResponseUrl?: boolean;
}) {
  const [busy, setBusy] = useState(false);
  const [problem, setProblem] = useState<string | null>(null);
  return (
    <span className="inline-flex flex-col gap-1">
      <button
        type="button"
        className={quiet ? 'button-quiet' : 'button'}
        disabled={busy}
        onClick={async () => {
          if (confirm && !window.confirm(confirm)) return;
          setBusy(true);
          const result = await sendJson(method, action, method === 'POST' ? body : undefined);
          setBusy(false);
          if (!result.ok) return setProblem(result.error.message);
          const url = (result.data as { url?: string } | null)?.url;
          if (redirectToResponseUrl && url) window.location.assign(url);
          else window.location.reload();
        }}
      >
        {busy ? 'Working…' : label}
      </button>
      {problem && <span role="alert" className="field-error">{problem}</span>}
    </span>
  );
}
