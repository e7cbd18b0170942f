import { addDays } from '../../lib/field';
import { formatDay } from '../../lib/field/words';
import type { ParcelFacts } from '../../lib/field/types';

/** How far ahead the Field looks for closures. */
const aheadDays = 14;

/** The parcel's closures in the next two weeks and its current terms, one tap away under the verdict. */
export default function ParcelNotes({ parcel, terms, localDate }: { parcel: ParcelFacts; terms: { version: number; body: string } | null; localDate: string }) {
  const until = addDays(localDate, aheadDays);
  const upcoming = parcel.closures.filter((c) => c.endsOn >= localDate && c.startsOn <= until).sort((a, b) => a.startsOn.localeCompare(b.startsOn));
  return (
    <div className="space-y-2" data-testid="parcel-notes">
      <details className="card">
        <summary className="cursor-pointer font-semibold">Closures in the next {aheadDays} days on {parcel.name} ({upcoming.length === 0 ? 'none' : upcoming.length})</summary>
        {upcoming.length === 0 ? (
          <p className="mt-2 text-sm">None planned.</p>
        ) : (
          <ul className="mt-2 list-disc pl-5 text-sm">{upcoming.map((c) => <li key={`${c.startsOn}|${c.reason}`}>{formatDay(c.startsOn)} to {formatDay(c.endsOn)}: {c.reason}</li>)}</ul>
        )}
      </details>
      <details className="card">
        <summary className="cursor-pointer font-semibold">Terms of {parcel.name}{terms ? ` (version ${terms.version})` : ''}</summary>
        <p className="mt-2 whitespace-pre-line text-sm">{terms ? terms.body : 'The landowner has not published terms for this parcel.'}</p>
      </details>
    </div>
  );
}
