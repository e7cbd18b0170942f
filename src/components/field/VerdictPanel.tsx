import type { CheckInAnswer, Verdict } from '../../lib/field/types';

/** Each verdict has a word, a symbol and a colour: colour is never the only signal. */
const looks: Record<Verdict, { title: string; symbol: string; tone: string }> = {
  clear: { title: 'Clear to harvest', symbol: '✓', tone: 'border-moss-600 bg-moss-50 text-moss-900' },
  edge: { title: 'Too close to the edge to call', symbol: '↔', tone: 'border-loam-500 bg-lichen-100 text-loam-900' },
  outside: { title: 'Outside every parcel open to you', symbol: '○', tone: 'border-loam-400 bg-white text-loam-900' },
  'no-permit': { title: 'No permit for you here', symbol: '✕', tone: 'border-ember-500 bg-ember-50 text-ember-700' },
  closed: { title: 'Closed: take nothing here', symbol: '⊘', tone: 'border-ember-600 bg-ember-50 text-ember-700' },
};

export default function VerdictPanel({ answer }: { answer: CheckInAnswer }) {
  const look = looks[answer.verdict];
  return (
    <section aria-live="polite" className={`rounded-xl border-4 p-5 ${look.tone}`} data-testid="verdict" data-verdict={answer.verdict}>
      <p className="flex items-center gap-3 text-3xl font-bold">
        <span aria-hidden="true" className="inline-flex h-12 w-12 items-center justify-center rounded-full border-2 border-current text-2xl">{look.symbol}</span>
        {look.title}
      </p>
      {answer.parcel && <p className="mt-2 text-lg">{answer.parcel.name}</p>}
      <ul className="mt-3 space-y-1 text-base">
        {answer.reasons.map((r) => <li key={r}>{r}</li>)}
      </ul>
      {answer.hazards.length > 0 && (
        <div className="mt-4 rounded-md border border-current/30 bg-white/70 p-3 text-sm text-loam-900" data-testid="hazards">
          <p className="font-semibold">Hazards here</p>
          <ul className="mt-1 list-disc pl-5">{answer.hazards.map((h) => <li key={h.title}><strong>{h.title}.</strong> {h.detail}</li>)}</ul>
        </div>
      )}
    </section>
  );
}
