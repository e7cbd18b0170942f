import { useEffect, useRef, useState } from 'react';
import type { LedgerEntry } from '../../db/ledger.queries';
import { formatDate } from '../../lib/format';
import EntryPhoto from '../EntryPhoto';
import CorrectionForm, { type CorrectionSaved } from './CorrectionForm';
import { chainOf } from './correction-plan';
import { EntryNotes } from './EntryNotes';
import { formatBase, formatRecordedAt, formatSeason, methodLabels, type LedgerRow } from './ledger-view';

/**
 * One entry opened: what a narrow screen leaves out of the row, its photo, and the correction form.
 * A saved correction is confirmed here, where the forager was looking.
 */
export default function EntryDetails({ row, entries, onCorrected }: { row: LedgerRow; entries: LedgerEntry[]; onCorrected?: (saved: CorrectionSaved) => Promise<void> }) {
  const [correcting, setCorrecting] = useState(false);
  const [saved, setSaved] = useState<CorrectionSaved | null>(null);
  const chain = chainOf(entries, row);
  const confirmation = useRef<HTMLParagraphElement>(null);
  // The form that had focus is gone once saved: the confirmation takes it, so it is read out and seen.
  useEffect(() => { if (saved) confirmation.current?.focus(); }, [saved]);

  async function done(result: CorrectionSaved) {
    await onCorrected?.(result);
    setSaved(result);
    setCorrecting(false);
  }

  return (
    <div className="max-w-2xl space-y-3 break-words pb-2" data-testid="entry-details">
      <dl className="grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 text-sm lg:hidden">
        <dt className="font-semibold sm:hidden">Parcel</dt><dd className="sm:hidden">{row.parcelName}</dd>
        <dt className="font-semibold">Method</dt><dd>{methodLabels[row.method]}</dd>
        <dt className="font-semibold">In base units</dt><dd>{row.quantities.map((q) => formatBase(q.baseQuantity, q.measure)).join(' and ')}</dd>
        <dt className="font-semibold">Recorded</dt>
        <dd><time dateTime={row.recordedAt}>{formatRecordedAt(row.recordedAt, row.timeZone)}</time>{row.localDate !== row.countedOn ? ` (counts on ${formatDate(row.countedOn)})` : ''}</dd>
        <dt className="font-semibold">Season</dt><dd>{formatSeason(row)}</dd>
      </dl>
      <div className="text-sm lg:hidden"><EntryNotes row={row} /></div>
      <p className="hidden text-sm lg:block">Season {formatSeason(row)}.</p>

      {row.photoUploadId && <EntryPhoto uploadId={row.photoUploadId} yours subject={`${row.speciesName}, ${formatDate(row.localDate)}`} />}

      {saved && !correcting && (
        <p ref={confirmation} tabIndex={-1} role="status" className="rounded-md border-2 border-moss-500 bg-moss-50 p-3 text-sm font-semibold text-moss-800" data-testid="correction-saved">
          {saved.words}{saved.breach ? ' It takes a limit over: it is flagged and the landowner is told.' : ''} The totals below include it.
        </p>
      )}
      {correcting ? (
        <CorrectionForm entry={row} chain={chain} onSaved={done} onCancel={() => setCorrecting(false)} />
      ) : (
        <button type="button" className="button-quiet" onClick={() => { setSaved(null); setCorrecting(true); }}>Correct this entry</button>
      )}
    </div>
  );
}
