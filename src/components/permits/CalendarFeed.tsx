import { useEffect, useState } from 'react';
import { sendJson } from '../api-client';

type Feed = { url: string; webcal: string; createdAt: string };

const forForager = 'Subscribe in your calendar app to see your permits, the days seasons open and close on the parcels you may use, and closures there.';
const forLandowner = 'Subscribe in your calendar app to see, on your listed parcels, the permits you have granted, the days seasons open and close, and your closures.';

/**
 * The person's private calendar feed (on My permits, and on Land for a landowner): make it, show its
 * address once (only a hash of its token is kept, so it cannot be shown again), make a new one, or
 * turn it off. It is one feed per person wherever it is made: both places show the same one.
 */
export default function CalendarFeed({ liveSince, landowner = false }: {
  /** When the live feed was made, in words; null with none. */
  liveSince: string | null;
  /** Worded for the land the person owns rather than the land they may use. */
  landowner?: boolean;
}) {
  const [feed, setFeed] = useState<Feed | null>(null);
  const [on, setOn] = useState(liveSince !== null);
  const [busy, setBusy] = useState(false);
  const [problem, setProblem] = useState<string | null>(null);
  const [copied, setCopied] = useState(false);
  const [hydrated, setHydrated] = useState(false);
  useEffect(() => setHydrated(true), []);

  async function send(method: 'POST' | 'DELETE', confirmText?: string) {
    if (confirmText && !window.confirm(confirmText)) return;
    setBusy(true);
    setProblem(null);
    setCopied(false);
    const result = await sendJson(method, '/api/calendar-feed');
    setBusy(false);
    if (!result.ok) return setProblem(result.error.message);
    if (method === 'POST') {
      setFeed((result.data as { feed: Feed }).feed);
      setOn(true);
    } else {
      setFeed(null);
      setOn(false);
    }
  }

  async function copy(url: string) {
    try {
      await navigator.clipboard.writeText(url);
      setCopied(true);
    } catch {
      setProblem('Your browser did not let us copy. Select the address and copy it yourself.');
    }
  }

  const replaceWarning = 'Make a new address? The address you have now stops working at once; calendars subscribed to it stop updating until you subscribe to the new one.';
  return (
    <div className="card space-y-3" data-testid="calendar-feed" data-hydrated={hydrated ? 'true' : undefined}>
      <p className="text-sm">
        {landowner ? forLandowner : forForager} Anyone with the address can read it, so keep it to yourself.
      </p>
      {feed ? (
        <div className="space-y-2">
          <label className="block text-sm font-semibold" htmlFor="calendar-feed-url">Subscribe in your calendar app</label>
          <div className="flex flex-col gap-2 sm:flex-row">
            <input id="calendar-feed-url" className="field-input mt-0 min-w-0 flex-1 font-mono text-xs" readOnly value={feed.url} onFocus={(e) => e.currentTarget.select()} data-testid="calendar-feed-url" />
            <button type="button" className="button-quiet" onClick={() => copy(feed.url)}>{copied ? 'Copied' : 'Copy address'}</button>
          </div>
          <p className="text-sm"><a href={feed.webcal} data-testid="calendar-feed-webcal">Open in my calendar app</a> · This address is shown only now; if you lose it, make a new one.</p>
        </div>
      ) : on ? (
        <p className="text-sm" data-testid="calendar-feed-on">Your calendar address is on{liveSince ? ` (made ${liveSince})` : ''}. It is shown only when it is made; if you lost it, make a new one.</p>
      ) : (
        <p className="text-sm" data-testid="calendar-feed-off">Your calendar address is off.</p>
      )}
      <div className="flex flex-wrap gap-2">
        {on ? (
          <>
            <button type="button" className="button-quiet" disabled={busy} onClick={() => send('POST', replaceWarning)}>{busy ? 'Working…' : 'Make a new address'}</button>
            <button type="button" className="button-quiet" disabled={busy} onClick={() => send('DELETE', 'Turn the calendar off? Its address stops working at once.')}>Turn off</button>
          </>
        ) : (
          <button type="button" className="button" disabled={busy} onClick={() => send('POST')}>{busy ? 'Working…' : 'Make my calendar address'}</button>
        )}
      </div>
      {problem && <p role="alert" className="field-error">{problem}</p>}
    </div>
  );
}
