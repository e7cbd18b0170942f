import { forwardRef } from 'react';
import type { CheckInAnswer, Verdict } from '../../lib/field/types';
import { joinWords } from '../../lib/field/words';
import { formatInstantIn } from '../../lib/format';
import VerdictIcon from './VerdictIcon';

/** Each verdict has a word, a symbol and a colour: colour is never the only signal. */
const looks: Record<Verdict, { title: string; tone: string }> = {
  clear: { title: 'Clear to harvest', tone: 'border-moss-600 bg-moss-50 text-moss-900' },
  edge: { title: 'Too close to the edge to call', tone: 'border-loam-500 bg-lichen-100 text-loam-900' },
  outside: { title: 'Outside every parcel open to you', tone: 'border-loam-400 bg-white text-loam-900' },
  'no-permit': { title: 'No permit for you here', tone: 'border-ember-500 bg-ember-50 text-ember-700' },
  closed: { title: 'Closed: take nothing here', tone: 'border-ember-600 bg-ember-50 text-ember-700' },
};

/** An answer decided on the phone from its field pack, with no signal. */
export type OfflineNote = { asOf: string; caveats: string[] };

/** "limits reached for Chaga and Ramps": a clear verdict says when a species can take no more. */
function reachedNote(answer: CheckInAnswer): string | null {
  const full = answer.species.filter((s) => s.state === 'reached' || s.state === 'over').map((s) => s.commonName);
  return full.length > 0 ? `limits reached for ${joinWords(full, 'and')}` : null;
}

const VerdictPanel = forwardRef<HTMLElement, { answer: CheckInAnswer; offline?: OfflineNote | null }>(function VerdictPanel({ answer, offline }, ref) {
  const look = looks[answer.verdict];
  const reached = answer.verdict === 'clear' ? reachedNote(answer) : null;
  return (
    <section ref={ref} aria-live="polite" tabIndex={-1} className={`scroll-mt-4 rounded-xl border-4 p-4 sm:p-5 ${look.tone}`} data-testid="verdict" data-verdict={answer.verdict} data-offline={offline ? 'true' : 'false'}>
      <p className="flex items-center gap-3 text-2xl font-bold sm:text-3xl">
        <VerdictIcon verdict={answer.verdict} />
        <span>{look.title}{reached && <span className="block text-lg font-semibold sm:inline sm:text-xl" data-testid="reached-note"> — {reached}</span>}</span>
      </p>
      {offline && (
        <p className="mt-2 inline-block rounded-md border border-current px-2 py-0.5 text-sm font-semibold" data-testid="offline-mark">
          Offline, as of {formatInstantIn(offline.asOf, answer.parcel?.timeZone ?? 'UTC')}
        </p>
      )}
      {answer.parcel && <p className="mt-2 text-lg">{answer.parcel.name}</p>}
      <ul className="mt-3 space-y-1 text-base">
        {answer.reasons.map((r) => <li key={r}>{r}</li>)}
        {offline?.caveats.map((c) => <li key={c} className="font-semibold">{c}</li>)}
      </ul>
      {answer.hazards.length > 0 && (
        <div className="mt-4 rounded-md border border-current/30 bg-white/70 p-3 text-sm text-loam-900" data-testid="hazards">
          <p className="font-semibold">Hazards here</p>
          <ul className="mt-1 list-disc pl-5">{answer.hazards.map((h) => <li key={h.title}><strong>{h.title}.</strong> {h.detail}</li>)}</ul>
        </div>
      )}
    </section>
  );
});

export default VerdictPanel;
