import type { SpeciesAnswer, Tally } from '../../lib/field/types';
import { compareDecimals, subtractDecimals } from '../../lib/units';
import { fieldScopeWords, formatAmount, formatPercent, formatSeasonWindows, speciesStateWords, stateSymbols, stateWords, unitAfter } from '../../lib/tally-words';

const barTone: Record<Tally['state'], string> = { within: 'bg-moss-500', nearing: 'bg-loam-500', reached: 'bg-ember-500', over: 'bg-ember-700' };

/** What remains of a limit, or by how much it is over: "250 g left of 500 g", "none left of 500 g", "200 g over the 500 g limit". */
function left(t: Tally): string {
  const limit = `${formatAmount(t.limit.quantity)} ${unitAfter(t.limit.quantity, t.limit.unit)}`;
  if (t.state === 'over') {
    const over = subtractDecimals(t.used, t.limit.quantity);
    return `${formatAmount(over)} ${unitAfter(over, t.limit.unit)} over the ${limit} limit`;
  }
  return compareDecimals(t.remaining, '0') > 0 ? `${formatAmount(t.remaining)} ${unitAfter(t.remaining, t.limit.unit)} left of ${limit}` : `none left of ${limit}`;
}

/** A bar per limit: how much remains this visit, today and this season, in each kind of quantity limited. */
export function TallyBars({ tallies }: { tallies: Tally[] }) {
  return (
    <ul className="mt-2 space-y-2">
      {tallies.map((t) => (
        <li key={`${t.scope}|${t.measure}`} data-scope={t.scope} data-measure={t.measure} data-state={t.state}>
          <div className="flex flex-wrap items-baseline justify-between gap-x-3 text-sm">
            <span className="min-w-0">{fieldScopeWords[t.scope]}: {left(t)}{t.limit.fromPermit ? ' (your permit)' : ''}</span>
            <span className="ml-auto whitespace-nowrap font-semibold"><span aria-hidden="true">{stateSymbols[t.state]} </span>{stateWords[t.state]}</span>
          </div>
          <div className="mt-1 h-3 w-full overflow-hidden rounded-full bg-loam-100" role="meter" aria-label={`${fieldScopeWords[t.scope]}: ${formatPercent(t.percent)} used`} aria-valuemin={0} aria-valuemax={100} aria-valuenow={Math.min(100, t.percent)}>
            <div className={`h-full ${barTone[t.state]}`} style={{ width: `${Math.min(100, t.percent)}%` }} />
          </div>
        </li>
      ))}
    </ul>
  );
}

/** The species allowed here, those in season today first. */
export default function SpeciesTallies({ species }: { species: SpeciesAnswer[] }) {
  const ordered = [...species].sort((a, b) => Number(b.inSeason) - Number(a.inSeason));
  return (
    <ul className="space-y-3" data-testid="species">
      {ordered.map((s) => (
        <li key={s.speciesId} className="card" data-species={s.commonName} data-state={s.state}>
          <div className="flex flex-wrap items-baseline justify-between gap-2">
            <h3 className="text-lg font-semibold">{s.commonName} <span className="text-sm font-normal italic text-loam-600">{s.scientificName}</span></h3>
            <span className="pill border-loam-400">{speciesStateWords[s.state]}</span>
          </div>
          <p className="text-xs text-loam-700">Season {formatSeasonWindows(s.seasons)} · by {s.methods.join(', ')}</p>
          {/* Out of season nothing may be taken, so what would remain is not shown. */}
          {!s.inSeason ? null : s.tallies.length > 0 ? <TallyBars tallies={s.tallies} /> : <p className="mt-1 text-sm">No quantity limit set.</p>}
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
