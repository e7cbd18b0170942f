import { formatDate } from '../../lib/format';
import { formatEntryQuantities, type LedgerRow } from './ledger-view';

/** The state of an entry in a word each: breach, correction, corrected, photo. */
export function EntryPills({ row }: { row: LedgerRow }) {
  if (!row.breach && !row.correctsEntryId && !row.isCorrected && !row.hasPhoto) return null;
  return (
    <div className="flex flex-wrap gap-1">
      {row.breach && <span className="pill border-2 border-ember-600 text-ember-700" data-flag="breach">breach</span>}
      {row.correctsEntryId && <span className="pill border-loam-400 text-loam-700" data-flag="correction">correction</span>}
      {row.isCorrected && <span className="pill border-loam-400 text-loam-700" data-flag="corrected">corrected</span>}
      {row.hasPhoto && <span className="pill border-moss-300 text-moss-700" data-flag="photo">photo</span>}
    </div>
  );
}

/** What a correction corrects and why, and what a breach meant: in the Notes column, and in the details on a narrow screen. */
export function EntryNotes({ row }: { row: LedgerRow }) {
  return (
    <>
      {row.correctsEntryId && (
        <p className="text-xs">
          Corrects{' '}
          {row.corrects ? (
            <a href={`#entry-${row.corrects.id}`}>the entry of {formatDate(row.corrects.countedOn)} ({formatEntryQuantities(row.corrects)})</a>
          ) : 'an earlier entry'}
          : {row.correctionReason}
          {row.recordedByName && <> — by {row.recordedByName}</>}
        </p>
      )}
      {row.breach && <p className="text-xs">Took a limit over{row.acknowledgedOver ? ', acknowledged when recorded' : ''}; the landowner was told.</p>}
    </>
  );
}
