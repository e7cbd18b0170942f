import type { QueuedRecord, QueueState } from './offline-store';

const stateWords: Record<QueueState, string> = { waiting: 'Waiting to send', sent: 'Sent', flagged: 'Recorded and flagged', refused: 'Not recorded' };
const stateTone: Record<QueueState, string> = { waiting: 'border-loam-500', sent: 'border-moss-600', flagged: 'border-ember-600 text-ember-700', refused: 'border-ember-600 text-ember-700' };

/** The entries kept on this phone and what became of each; nothing leaves the list unseen. */
export default function QueueList({ queue, waiting, onSend }: { queue: QueuedRecord[]; waiting: number; onSend: () => void }) {
  const entries = queue.filter((r) => r.kind === 'entry').slice(-20).reverse();
  if (entries.length === 0) return null;
  return (
    <section className="card" data-testid="queue">
      <div className="flex flex-wrap items-center justify-between gap-2">
        <h2 className="text-lg">Entries made on this phone</h2>
        {waiting > 0 && <button type="button" className="button" onClick={onSend}>Send now ({waiting})</button>}
      </div>
      <ul className="mt-2 space-y-2">
        {entries.map((r) => (
          <li key={r.idempotencyKey} className="text-sm" data-state={r.state}>
            <span className={`pill mr-2 ${stateTone[r.state]}`}>{stateWords[r.state]}</span>
            {r.summary}
            {r.message && <p className="mt-1 text-loam-800">{r.message}</p>}
          </li>
        ))}
      </ul>
    </section>
  );
}
