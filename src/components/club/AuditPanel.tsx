import { Fragment, useEffect, useId, useMemo, useRef, useState } from 'react';
import {
  createColumnHelper, flexRender, getCoreRowModel, getFilteredRowModel, getSortedRowModel, useReactTable,
  type ColumnFiltersState, type FilterFn, type SortingState,
} from '@tanstack/react-table';
import type { LimitScope, Tally, TallyState } from '../../lib/field/types';
import type { Audit, AuditEntry, AuditRow } from '../../db/audit.queries';
import { formatQuantities } from '../../lib/tally-words';
import { formatDate } from '../../lib/format';
import { sendJson } from '../api-client';
import EntryPhoto from '../EntryPhoto';
import AuditChart from './AuditChart';
import {
  ariaSort, auditRowKey, auditScopeLabels, capitalise, entriesQuery, formatMethod, formatPosition, formatSeason, formatTally, isIsoDate, matchesStateChoice, rankOf, scopesPresent, stateChoices, stateSymbols, stateTones, stateWords, talliesOfScope, type StateChoice,
} from './audit-view';

export type AuditPanelProps = {
  /** The club's or the parcel's audit endpoint; the panel adds `?asOf=`. */
  auditUrl: string;
  entriesUrl: string;
  /** The parcel-local date the audit opens on; empty for today on each parcel. */
  initialAsOf: string;
  /** A landowner sees where entries were made; a steward never does. */
  showPositions: boolean;
};

type Load<T> = { status: 'loading' } | { status: 'error'; message: string } | { status: 'ready'; data: T };

/** The audit of tallies against limits for one season: a chart per limit, a table per forager, and the entries behind each row. */
export default function AuditPanel({ auditUrl, entriesUrl, initialAsOf, showPositions }: AuditPanelProps) {
  const id = useId();
  const [draft, setDraft] = useState(initialAsOf);
  const [asOf, setAsOf] = useState(initialAsOf);
  const [audit, setAudit] = useState<Load<Audit>>({ status: 'loading' });
  const latest = useRef(0);
  const [hydrated, setHydrated] = useState(false);
  useEffect(() => setHydrated(true), []);

  useEffect(() => {
    const ticket = ++latest.current;
    setAudit({ status: 'loading' });
    void sendJson('GET', asOf ? `${auditUrl}?${new URLSearchParams({ asOf })}` : auditUrl).then((result) => {
      if (ticket !== latest.current) return;
      setAudit(result.ok ? { status: 'ready', data: result.data as Audit } : { status: 'error', message: result.error.message });
    });
  }, [auditUrl, asOf]);

  return (
    <div data-testid="audit-panel" data-hydrated={hydrated ? 'true' : undefined} data-status={audit.status}>
      <div className="max-w-md">
        <label htmlFor={`${id}-as-of`} className="field-label">As of</label>
        <input
          id={`${id}-as-of`} type="date" className="field-input" value={draft} aria-describedby={`${id}-as-of-help`}
          onChange={(e) => { setDraft(e.target.value); if (isIsoDate(e.target.value)) setAsOf(e.target.value); }}
        />
        <p id={`${id}-as-of-help`} className="mt-1 text-xs text-loam-600">The audit covers the season in progress on this date, or the last one that ended before it. Dates are each parcel's own calendar day.</p>
      </div>
      {audit.status === 'loading' && <p className="mt-4 text-loam-700" aria-live="polite">Loading the audit…</p>}
      {audit.status === 'error' && <p role="alert" className="field-error mt-4">{audit.message}</p>}
      {audit.status === 'ready' && (audit.data.rows.length === 0
        ? <p className="card mt-4">No entries in this season yet.</p>
        : (
          <>
            {audit.data.chart.length > 0 && <AuditChart bars={audit.data.chart} />}
            <AuditTable rows={audit.data.rows} asOf={audit.data.asOf} entriesUrl={entriesUrl} showPositions={showPositions} />
          </>
        ))}
    </div>
  );
}

const column = createColumnHelper<AuditRow>();
const textMatches: FilterFn<AuditRow> = (row, _id, value: string) => {
  const words = value.trim().toLowerCase();
  const r = row.original;
  return [r.parcelName, r.commonName, r.scientificName, r.foragerName].some((s) => s.toLowerCase().includes(words));
};
const stateMatches: FilterFn<AuditRow> = (row, _id, value: StateChoice) => matchesStateChoice(row.original.state, value);

function StateMark({ state }: { state: TallyState | null }) {
  if (!state) return <span className="text-loam-600">no limit</span>;
  return <span className={`pill whitespace-nowrap ${stateTones[state]}`} data-state={state}><span aria-hidden="true">{stateSymbols[state]} </span>{stateWords[state]}</span>;
}

function TallyCell({ tallies }: { tallies: Tally[] }) {
  if (tallies.length === 0) return <span className="text-loam-500" title="No limit of this kind">—</span>;
  return (
    <>
      {tallies.map((tally) => (
        <span key={tally.measure} className="block" data-scope={tally.scope} data-measure={tally.measure} data-state={tally.state}>
          <span className="block">{formatTally(tally)}</span>
          <StateMark state={tally.state} />{tally.limit.fromPermit && <span className="ml-1 text-xs text-loam-600">permit's limit</span>}
        </span>
      ))}
    </>
  );
}

/** The tally a row is closest to its limit on, which the table shows; the rest are in the row's details. */
const highestTally = (r: AuditRow): Tally | null => r.tallies.reduce<Tally | null>((top, t) => (!top || t.percent > top.percent ? t : top), null);

/** Few, wide columns that fit a phone: who and what, the limit closest to its end, the entries. Each limit's tally is in the details. */
function buildColumns() {
  return [
    column.accessor('commonName', {
      id: 'species', header: 'Species and parcel',
      cell: ({ row }) => (
        <>
          <span className="block font-medium">{row.original.commonName}</span>
          <span className="block text-xs italic text-loam-600">{row.original.scientificName}</span>
          <span className="block text-xs text-loam-700">{row.original.parcelName}</span>
          <span className="mt-1 block text-sm sm:hidden">{row.original.foragerName}</span>
        </>
      ),
    }),
    column.accessor('foragerName', {
      id: 'forager', header: 'Forager',
      cell: ({ row }) => <>{row.original.foragerName}{row.original.holderName !== row.original.foragerName && <span className="block text-xs text-loam-600">under {row.original.holderName}</span>}</>,
    }),
    column.accessor((r) => highestTally(r)?.percent ?? -1, {
      id: 'highest', header: 'Closest to a limit', sortDescFirst: true,
      cell: ({ row }) => {
        const top = highestTally(row.original);
        if (!top) return <span className="text-loam-600">no limit</span>;
        return (
          <span className="block" data-scope={top.scope} data-state={top.state}>
            <span className="block text-xs text-loam-700">{capitalise(auditScopeLabels[top.scope])}</span>
            <span className="block">{formatTally(top)}</span>
            <StateMark state={top.state} />
          </span>
        );
      },
    }),
    column.accessor((r) => rankOf(r.state), { id: 'state', header: 'Worst state', sortDescFirst: true, filterFn: stateMatches, cell: ({ row }) => <StateMark state={row.original.state} /> }),
    column.accessor('entries', {
      header: 'Entries', sortDescFirst: true,
      cell: ({ row }) => <>{row.original.entries}{row.original.breaches > 0 && <span className="mt-1 block"><span className="pill border-2 border-ember-600 text-ember-700">{row.original.breaches} breach{row.original.breaches === 1 ? '' : 'es'}</span></span>}</>,
    }),
  ];
}

/** Columns a phone leaves out: the worst state (the closest limit shows it), the forager (under the species) and the entries (in the details). */
const narrowClass = (columnId: string): string | undefined => (columnId === 'state' ? 'hidden md:table-cell' : columnId === 'entries' || columnId === 'forager' ? 'hidden sm:table-cell' : undefined);

/** A row's details: its season, each limit's tally, then the entries behind it. */
function RowDetails({ row, scopes, load, showPositions }: { row: AuditRow; scopes: LimitScope[]; load: Load<AuditEntry[]>; showPositions: boolean }) {
  return (
    <div className="space-y-3">
      <p className="text-sm">Season {formatSeason(row.season)}{row.holderName ? ` · permit of ${row.holderName}` : ''} · {row.entries} {row.entries === 1 ? 'entry' : 'entries'}{row.breaches > 0 ? `, ${row.breaches} ${row.breaches === 1 ? 'breach' : 'breaches'}` : ''}</p>
      <dl className="grid grid-cols-1 gap-x-6 gap-y-2 text-sm sm:grid-cols-2 lg:grid-cols-3" data-testid="row-tallies">
        {scopes.filter((scope) => talliesOfScope(row, scope).length > 0).map((scope) => (
          <div key={scope}>
            <dt className="font-semibold">{capitalise(auditScopeLabels[scope])}</dt>
            <dd><TallyCell tallies={talliesOfScope(row, scope)} /></dd>
          </div>
        ))}
      </dl>
      <div className="overflow-x-auto"><EntryList load={load} showPositions={showPositions} /></div>
      {load.status === 'ready' && <EntryPhotos entries={load.data} speciesName={row.commonName} />}
    </div>
  );
}

function AuditTable({ rows, asOf, entriesUrl, showPositions }: { rows: AuditRow[]; asOf: string | null; entriesUrl: string; showPositions: boolean }) {
  const id = useId();
  const columns = useMemo(() => buildColumns(), []);
  const scopes = useMemo(() => scopesPresent(rows), [rows]);
  const [sorting, setSorting] = useState<SortingState>([]);
  const [columnFilters, setColumnFilters] = useState<ColumnFiltersState>([]);
  const [globalFilter, setGlobalFilter] = useState('');
  const [open, setOpen] = useState<Record<string, Load<AuditEntry[]>>>({});
  useEffect(() => setOpen({}), [rows]);

  const table = useReactTable({
    data: rows,
    columns,
    state: { sorting, columnFilters, globalFilter },
    onSortingChange: setSorting,
    onColumnFiltersChange: setColumnFilters,
    onGlobalFilterChange: setGlobalFilter,
    globalFilterFn: textMatches,
    getRowId: auditRowKey,
    getCoreRowModel: getCoreRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
    getSortedRowModel: getSortedRowModel(),
  });
  const shown = table.getRowModel().rows;
  const choice = (table.getColumn('state')?.getFilterValue() as StateChoice | undefined) ?? 'all';

  async function toggle(row: AuditRow) {
    const key = auditRowKey(row);
    if (open[key]) return setOpen(({ [key]: _closed, ...rest }) => rest);
    setOpen((o) => ({ ...o, [key]: { status: 'loading' } }));
    const result = await sendJson('GET', `${entriesUrl}?${entriesQuery(row, asOf)}`);
    const load: Load<AuditEntry[]> = result.ok ? { status: 'ready', data: (result.data as { entries: AuditEntry[] }).entries } : { status: 'error', message: result.error.message };
    setOpen((o) => (key in o ? { ...o, [key]: load } : o));
  }

  return (
    <section className="mt-6" aria-labelledby={`${id}-title`}>
      <h3 id={`${id}-title`} className="font-semibold text-moss-800">Tallies by forager</h3>
      <div className="mt-2 flex flex-wrap items-end gap-3">
        <div className="min-w-[12rem] flex-1">
          <label htmlFor={`${id}-text`} className="field-label">Filter</label>
          <input id={`${id}-text`} type="search" className="field-input" placeholder="parcel, species or forager" value={globalFilter} onChange={(e) => setGlobalFilter(e.target.value)} />
        </div>
        <div>
          <label htmlFor={`${id}-state`} className="field-label">Show</label>
          <select id={`${id}-state`} className="field-input" value={choice} onChange={(e) => table.getColumn('state')?.setFilterValue(e.target.value === 'all' ? undefined : e.target.value)}>
            {stateChoices.map((c) => <option key={c.value} value={c.value}>{c.label}</option>)}
          </select>
        </div>
      </div>
      <p className="mt-2 text-sm text-loam-700" aria-live="polite" data-testid="audit-count">{shown.length} of {rows.length} {rows.length === 1 ? 'row' : 'rows'}.</p>
      <div className="relative mt-2 overflow-x-auto rounded-lg border border-loam-200 bg-white">
        <table className="table">
          <caption className="sr-only">Tallies for the season on {asOf ? formatDate(asOf) : 'today'}, one row per parcel, species and forager. Select a column heading to sort.</caption>
          <thead>
            {table.getHeaderGroups().map((group) => (
              <tr key={group.id}>
                {group.headers.map((header) => {
                  const sorted = header.column.getIsSorted();
                  return (
                    <th key={header.id} scope="col" aria-sort={ariaSort(sorted)} className={narrowClass(header.column.id)}>
                      <button type="button" className="inline-flex items-center gap-1 text-left font-semibold hover:underline" onClick={header.column.getToggleSortingHandler()}>
                        {flexRender(header.column.columnDef.header, header.getContext())}
                        <span aria-hidden="true" className="text-xs text-loam-600">{sorted === 'asc' ? '▲' : sorted === 'desc' ? '▼' : '↕'}</span>
                      </button>
                    </th>
                  );
                })}
                <th scope="col" className="relative w-[6.5rem]"><span className="sr-only">Each limit and the entries behind the row</span></th>
              </tr>
            ))}
          </thead>
          <tbody>
            {shown.length === 0 && <tr><td colSpan={columns.length + 1} className="text-loam-700">No rows match these filters.</td></tr>}
            {shown.map((row) => {
              const detail = open[row.id];
              const panelId = `${id}-entries-${row.index}`;
              return (
                <Fragment key={row.id}>
                  <tr data-row={row.id} data-state={row.original.state ?? 'none'} className={row.original.state === 'over' ? 'bg-ember-50' : ''}>
                    {row.getVisibleCells().map((cell) => <td key={cell.id} className={narrowClass(cell.column.id)}>{flexRender(cell.column.columnDef.cell, cell.getContext())}</td>)}
                    <td>
                      <button type="button" className="button-quiet px-2" aria-expanded={detail ? 'true' : 'false'} aria-controls={detail ? panelId : undefined} onClick={() => void toggle(row.original)}>
                        {detail ? 'Hide' : 'Details'}
                      </button>
                    </td>
                  </tr>
                  {detail && (
                    <tr id={panelId} className="bg-loam-50" data-entries-for={row.id}>
                      <td colSpan={columns.length + 1}><RowDetails row={row.original} scopes={scopes} load={detail} showPositions={showPositions} /></td>
                    </tr>
                  )}
                </Fragment>
              );
            })}
          </tbody>
        </table>
      </div>
    </section>
  );
}

/** The photos of the entries behind a row, under their table so it keeps its width on a phone. */
function EntryPhotos({ entries, speciesName }: { entries: AuditEntry[]; speciesName: string }) {
  const withPhoto = entries.filter((e) => e.photo);
  if (withPhoto.length === 0) return null;
  return (
    <div data-testid="audit-photos">
      <h4 className="text-sm font-semibold">{withPhoto.length === 1 ? 'Photo' : 'Photos'}</h4>
      <ul className="mt-1 space-y-2">
        {withPhoto.map((e) => e.photo && (
          <li key={e.id} data-photo-for={e.id}>
            <EntryPhoto uploadId={e.photo.uploadId} yours={e.photo.yours} subject={`${speciesName}, ${formatQuantities(e.quantities, { signed: Boolean(e.correctsEntryId) })} on ${formatDate(e.localDate)}`} />
          </li>
        ))}
      </ul>
    </div>
  );
}

/** A pill for an entry that took a limit over. */
function BreachMark({ entry }: { entry: AuditEntry }) {
  return <span className="pill border-2 border-ember-600 text-ember-700"><span aria-hidden="true">{stateSymbols.over} </span>breach{entry.acknowledgedOver ? ', acknowledged' : ''}</span>;
}

const correctionWords = (e: AuditEntry): string | null => (e.correctsEntryId ? `Correction: ${e.correctionReason ?? 'no reason given'}` : null);

/** Columns a phone leaves out: what they hold is told under the day instead, so the entries fit its width. */
const wideOnly = 'hidden sm:table-cell';

function EntryList({ load, showPositions }: { load: Load<AuditEntry[]>; showPositions: boolean }) {
  if (load.status === 'loading') return <p aria-live="polite">Loading entries…</p>;
  if (load.status === 'error') return <p role="alert" className="field-error">{load.message}</p>;
  if (load.data.length === 0) return <p>No entries behind this row.</p>;
  return (
    <table className="table" data-testid="audit-entries">
      <caption className="sr-only">The entries behind this row, oldest first</caption>
      <thead>
        <tr>
          <th scope="col">Counts on</th><th scope="col">Quantity</th><th scope="col" className={wideOnly}>Method</th><th scope="col" className={wideOnly}>Breach</th>
          <th scope="col" className={wideOnly}>Correction</th>{showPositions && <th scope="col" className={wideOnly}>Position</th>}
        </tr>
      </thead>
      <tbody>
        {load.data.map((e) => (
          <tr key={e.id} data-entry={e.id}>
            <td>
              <span className="whitespace-nowrap">{formatDate(e.countedOn)}</span>
              <span className="block text-xs text-loam-700 sm:hidden">
                {formatMethod(e.method)}{correctionWords(e) ? ` · ${correctionWords(e)}` : ''}{showPositions ? ` · ${e.position ? formatPosition(e.position) : 'position not recorded'}` : ''}
              </span>
              {e.breach && <span className="mt-1 block sm:hidden"><BreachMark entry={e} /></span>}
              {e.photo && <span className="mt-1 block"><span className="pill border-moss-300 text-moss-700" data-flag="photo">photo below</span></span>}
            </td>
            <td className="whitespace-nowrap">{formatQuantities(e.quantities, { signed: Boolean(e.correctsEntryId) })}</td>
            <td className={wideOnly}>{formatMethod(e.method)}</td>
            <td className={wideOnly}>{e.breach ? <BreachMark entry={e} /> : 'no'}</td>
            <td className={wideOnly}>{correctionWords(e) ?? '—'}</td>
            {showPositions && <td className={`whitespace-nowrap ${wideOnly}`}>{e.position ? formatPosition(e.position) : 'not recorded'}</td>}
          </tr>
        ))}
      </tbody>
    </table>
  );
}
