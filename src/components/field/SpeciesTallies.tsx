import type { SpeciesAnswer, Tally } from '../../lib/field/types';
import { units } from '../../lib/units';

const scopeWords: Record<Tally['scope'], string> = {
  visit: 'this visit', day: 'today', season: 'your season', 'parcel-season': 'everyone this season', 'club-season': 'your club this season',
};
const stateWords: Record<SpeciesAnswer['state'], string> = {
  open: 'open', 'out-of-season': 'out of season', 'method-not-allowed': 'method not allowed', within: 'within limits', nearing: 'nearing a limit', reached: 'limit reached', over: 'over a limit',
};
const barTone: Record<Tally['state'], string> = { within: 'bg-moss-500', nearing: 'bg-loam-500', reached: 'bg-ember-500', over: 'bg-ember-700' };

/** A bar per limit: how much remains this visit, today and this season. */
export function TallyBars({ tallies }: { tallies: Tally[] }) {
  return (
    <ul className="mt-2 space-y-2">
      {tallies.map((t) => (
        <li key={t.scope} data-scope={t.scope} data-state={t.state}>
          <div className="flex justify-between text-sm">
            <span>{scopeWords[t.scope]}: {Number(t.remaining)} {units[t.limit.unit].label} left of {Number(t.limit.quantity)}{t.limit.fromPermit ? ' (your permit)' : ''}</span>
            <span className="font-semibold">{t.state}</span>
          </div>
          <div className="mt-1 h-3 w-full overflow-hidden rounded-full bg-loam-100" role="meter" aria-label={`${scopeWords[t.scope]}: ${Math.round(t.percent)} % used`} aria-valuemin={0} aria-valuemax={100} aria-valuenow={Math.min(100, Math.round(t.percent))}>
            <div className={`h-full ${barTone[t.state]}`} style={{ width: `${Math.min(100, t.percent)}%` }} />
          </div>
        </li>
      ))}
    </ul>
  );
}

export default function SpeciesTallies({ species }: { species: SpeciesAnswer[] }) {
  return (
    <ul className="space-y-3" data-testid="species">
      {species.map((s) => (
        <li key={s.speciesId} className="card" data-species={s.commonName} data-state={s.state}>
          <div className="flex flex-wrap items-baseline justify-between gap-2">
            <h3 className="text-lg font-semibold">{s.commonName} <span className="text-sm font-normal italic text-loam-600">{s.scientificName}</span></h3>
            <span className="pill border-loam-400">{stateWords[s.state]}</span>
          </div>
          <p className="text-xs text-loam-700">Season {s.seasons.map((w) => `${w.start} to ${w.end}`).join(', ')} · by {s.methods.join(', ')}</p>
          {s.tallies.length > 0 ? <TallyBars tallies={s.tallies} /> : <p className="mt-1 text-sm">No quantity limit set.</p>}
          <details className="mt-2 text-sm">
            <summary className="cursor-pointer font-semibold text-ember-700">Cautions and lookalikes</summary>
            <ul className="mt-1 list-disc pl-5">{s.cautions.map((c) => <li key={c}>{c}</li>)}</ul>
            {s.lookalikes.map((l) => <p key={l.scientificName} className="mt-1"><strong>{l.danger}:</strong> {l.commonName} (<em>{l.scientificName}</em>). {l.howToTell}</p>)}
          </details>
        </li>
      ))}
    </ul>
  );
}
