import { useState } from 'react';
import type { LedgerEntry, LedgerTotal } from '../../db/ledger.queries';
import { sendJson } from '../api-client';
import type { CorrectionSaved } from './CorrectionForm';
import LedgerTable from './LedgerTable';
import LedgerTotals from './LedgerTotals';

/**
 * My ledger's entries and totals as one island: a correction saved from a row reads the ledger
 * again (GET /api/ledger), so the new entry and the totals show at once without leaving the page.
 */
export default function Ledger({ entries: first, totals: firstTotals }: { entries: LedgerEntry[]; totals: LedgerTotal[] }) {
  const [entries, setEntries] = useState(first);
  const [totals, setTotals] = useState(firstTotals);

  async function reload(_saved: CorrectionSaved) {
    const result = await sendJson('GET', '/api/ledger');
    if (!result.ok) return window.location.reload();
    const data = result.data as { entries: LedgerEntry[]; totals: LedgerTotal[] };
    setEntries(data.entries);
    setTotals(data.totals);
  }

  return (
    <>
      <h2 className="mt-8">Entries</h2>
      <div className="mt-3"><LedgerTable entries={entries} onCorrected={reload} /></div>
      <h2 className="mt-10">Totals</h2>
      <div data-testid="ledger-totals-section"><LedgerTotals totals={totals} /></div>
    </>
  );
}
