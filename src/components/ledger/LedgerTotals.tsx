import type { LedgerTotal } from '../../db/ledger.queries';
import { formatBase, formatSeason } from './ledger-view';

const fromMedium = 'hidden md:table-cell';

/** Totals per parcel, species and season, in base units; corrections are signed and counted in. On a phone the parcel and season sit under the species. */
export default function LedgerTotals({ totals }: { totals: LedgerTotal[] }) {
  return (
    <>
      <div className="relative mt-3 overflow-x-auto rounded-lg border border-loam-200 bg-white">
        <table className="table" data-testid="ledger-totals">
          <caption className="sr-only">Your totals per season, parcel and species</caption>
          <thead>
            <tr>
              <th scope="col" className={fromMedium}>Season</th>
              <th scope="col" className={fromMedium}>Parcel</th>
              <th scope="col">Species</th>
              <th scope="col">Total</th>
              <th scope="col" className={fromMedium}>Entries</th>
              <th scope="col" className={fromMedium}>Corrections</th>
              <th scope="col">Breaches</th>
            </tr>
          </thead>
          <tbody>
            {totals.map((t) => (
              <tr key={`${t.seasonStart}|${t.parcelId}|${t.speciesId}|${t.measure}`} data-season={t.seasonStart} data-parcel={t.parcelName} data-species={t.speciesName} data-measure={t.measure}>
                <td className={`${fromMedium} whitespace-nowrap`}>{formatSeason(t)}</td>
                <td className={fromMedium}>{t.parcelName}</td>
                <td>
                  {t.speciesName}
                  <span className="block text-xs text-loam-700 md:hidden">{t.parcelName}</span>
                  <span className="block text-xs text-loam-700 md:hidden">{formatSeason(t)}</span>
                  <span className="block text-xs text-loam-700 md:hidden">
                    {t.entries} {t.entries === 1 ? 'entry' : 'entries'}, {t.corrections} {t.corrections === 1 ? 'correction' : 'corrections'}
                  </span>
                </td>
                <td className="whitespace-nowrap font-semibold" data-total={t.baseTotal} data-measure={t.measure}>{formatBase(t.baseTotal, t.measure)}</td>
                <td className={fromMedium}>{t.entries}</td>
                <td className={fromMedium}>{t.corrections}</td>
                <td>{t.breaches > 0 ? <span className="pill border-2 border-ember-600 text-ember-700">{t.breaches} breach{t.breaches === 1 ? '' : 'es'}</span> : 'none'}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <p className="mt-2 text-xs text-loam-600">
        A season is the allowance's window that held the harvest date, in the parcel's own time zone (a window may cross New Year,
        like Nov 1 – Mar 15), as it stood when the entry was recorded. A correction counts on the day, visit and season of the entry
        it corrects (the first of its chain). Totals are in grams, millilitres or a count of each kind of thing; amounts of different
        kinds are never converted into each other.
      </p>
    </>
  );
}
