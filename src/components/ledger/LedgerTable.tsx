import { useEffect, useMemo, useState } from 'react';
import {
  createColumnHelper, flexRender, getCoreRowModel, getExpandedRowModel, getFilteredRowModel, getSortedRowModel, useReactTable,
  type ColumnFiltersState, type FilterFn, type SortDirection, type SortingState,
} from '@tanstack/react-table';
import { formatDate } from '../../lib/format';
import type { LedgerEntry } from '../../db/ledger.queries';
import { buildLedgerRows, formatBase, formatEntryQuantities, formatRecordedAt, methodLabels, quantityOrder, type LedgerRow } from './ledger-view';

export type LedgerTableProps = { entries: LedgerEntry[] };

const column = createColumnHelper<LedgerRow>();
const sameParcel: FilterFn<LedgerRow> = (row, _id, value: string) => row.original.parcelId === value;
const sameSpecies: FilterFn<LedgerRow> = (row, _id, value: string) => row.original.speciesId === value;
/** Each row carries its whole group's text, so an entry and its corrections are kept or dropped together. */
const groupContains: FilterFn<LedgerRow> = (row, _id, value: string) => row.original.searchText.includes(value.trim().toLowerCase());

const columns = [
  column.accessor('countedOn', {
    header: 'Counts on',
    sortingFn: 'text',
    sortDescFirst: true,
    cell: ({ row }) => (
      <span style={{ paddingLeft: `${row.depth * 1.25}rem` }} className="inline-block whitespace-nowrap">
        {row.depth > 0 && <span aria-hidden="true">↳ </span>}
        {formatDate(row.original.countedOn)}
      </span>
    ),
  }),
  column.accessor('parcelName', { id: 'parcel', header: 'Parcel', filterFn: sameParcel }),
  column.accessor('speciesName', {
    id: 'species',
    header: 'Species',
    filterFn: sameSpecies,
    cell: ({ row }) => (
      <>
        {row.original.speciesName}
        <span className="block text-xs italic text-loam-600">{row.original.scientificName}</span>
      </>
    ),
  }),
  column.accessor((r) => methodLabels[r.method], { id: 'method', header: 'Method' }),
  column.accessor((r) => r.quantities[0]?.baseQuantity ?? '0', {
    id: 'quantity',
    header: 'Quantity',
    sortingFn: (a, b) => quantityOrder(a.original, b.original),
    sortDescFirst: true,
    cell: ({ row }) => <span className="whitespace-nowrap">{formatEntryQuantities(row.original)}</span>,
  }),
  column.accessor((r) => r.quantities.map((q) => q.baseQuantity).join(' '), {
    id: 'base',
    header: 'In base units',
    sortingFn: (a, b) => quantityOrder(a.original, b.original),
    sortDescFirst: true,
    cell: ({ row }) => <span className="whitespace-nowrap">{row.original.quantities.map((q) => formatBase(q.baseQuantity, q.measure)).join(' and ')}</span>,
  }),
  column.accessor('recordedAt', {
    header: 'Recorded',
    sortingFn: 'text',
    sortDescFirst: true,
    cell: ({ row, getValue }) => <time dateTime={getValue()} className="whitespace-nowrap">{formatRecordedAt(getValue(), row.original.timeZone)}</time>,
  }),
  column.display({ id: 'notes', header: 'Notes', cell: ({ row }) => <EntryNotes row={row.original} /> }),
];

const ariaSort = (direction: false | SortDirection) => (direction === 'asc' ? 'ascending' : direction === 'desc' ? 'descending' : 'none');

function EntryNotes({ row }: { row: LedgerRow }) {
  return (
    <div className="min-w-[14rem] space-y-1">
      <div className="flex flex-wrap gap-1">
        {row.breach && <span className="pill border-2 border-ember-600 text-ember-700" data-flag="breach">breach</span>}
        {row.correctsEntryId && <span className="pill border-loam-400 text-loam-700" data-flag="correction">correction</span>}
        {row.isCorrected && <span className="pill border-loam-400 text-loam-700" data-flag="corrected">corrected</span>}
        {row.hasPhoto && <span className="pill border-moss-300 text-moss-700" data-flag="photo">photo</span>}
      </div>
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
    </div>
  );
}

/** The forager's ledger: sortable by any column header, filtered by text, parcel and species. */
export default function LedgerTable({ entries }: LedgerTableProps) {
  const data = useMemo(() => buildLedgerRows(entries), [entries]);
  const parcels = useMemo(() => choices(entries, (e) => [e.parcelId, e.parcelName]), [entries]);
  const species = useMemo(() => choices(entries, (e) => [e.speciesId, e.speciesName]), [entries]);
  const [sorting, setSorting] = useState<SortingState>([]);
  const [columnFilters, setColumnFilters] = useState<ColumnFiltersState>([]);
  const [globalFilter, setGlobalFilter] = useState('');
  const [hydrated, setHydrated] = useState(false);
  useEffect(() => setHydrated(true), []);

  const table = useReactTable({
    data,
    columns,
    state: { sorting, columnFilters, globalFilter, expanded: true },
    onSortingChange: setSorting,
    onColumnFiltersChange: setColumnFilters,
    onGlobalFilterChange: setGlobalFilter,
    globalFilterFn: groupContains,
    getRowId: (row) => row.id,
    getSubRows: (row) => row.subRows,
    getCoreRowModel: getCoreRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getExpandedRowModel: getExpandedRowModel(),
  });
  const rows = table.getRowModel().rows;
  const filterValue = (id: string) => (table.getColumn(id)?.getFilterValue() as string | undefined) ?? '';
  const setFilter = (id: string, value: string) => table.getColumn(id)?.setFilterValue(value || undefined);

  return (
    <div data-testid="ledger-table" data-hydrated={hydrated ? 'true' : undefined}>
      <div className="flex flex-wrap items-end gap-3">
        <div className="min-w-[12rem] flex-1">
          <label htmlFor="ledger-search" className="field-label">Search</label>
          <input id="ledger-search" type="search" className="field-input" placeholder="species, parcel, reason…" value={globalFilter} onChange={(e) => setGlobalFilter(e.target.value)} />
        </div>
        <div>
          <label htmlFor="ledger-parcel" className="field-label">Parcel</label>
          <select id="ledger-parcel" className="field-input" value={filterValue('parcel')} onChange={(e) => setFilter('parcel', e.target.value)}>
            <option value="">All parcels</option>
            {parcels.map(([id, name]) => <option key={id} value={id}>{name}</option>)}
          </select>
        </div>
        <div>
          <label htmlFor="ledger-species" className="field-label">Species</label>
          <select id="ledger-species" className="field-input" value={filterValue('species')} onChange={(e) => setFilter('species', e.target.value)}>
            <option value="">All species</option>
            {species.map(([id, name]) => <option key={id} value={id}>{name}</option>)}
          </select>
        </div>
      </div>
      <p className="mt-2 text-sm text-loam-700" aria-live="polite" data-testid="ledger-count">
        Showing {rows.length} of {entries.length} {entries.length === 1 ? 'entry' : 'entries'}.
      </p>
      <div className="relative mt-2 overflow-x-auto rounded-lg border border-loam-200 bg-white">
        <table className="table min-w-[56rem]">
          <caption className="sr-only">Your harvest entries, newest first; corrections sit under the entry they correct. Select a column heading to sort.</caption>
          <thead>
            {table.getHeaderGroups().map((group) => (
              <tr key={group.id}>
                {group.headers.map((header) => {
                  const label = flexRender(header.column.columnDef.header, header.getContext());
                  if (!header.column.getCanSort()) return <th key={header.id} scope="col">{label}</th>;
                  const sorted = header.column.getIsSorted();
                  return (
                    <th key={header.id} scope="col" aria-sort={ariaSort(sorted)}>
                      <button type="button" className="inline-flex items-center gap-1 font-semibold hover:underline" onClick={header.column.getToggleSortingHandler()}>
                        {label}
                        <span aria-hidden="true" className="text-xs text-loam-600">{sorted === 'asc' ? '▲' : sorted === 'desc' ? '▼' : '↕'}</span>
                      </button>
                    </th>
                  );
                })}
              </tr>
            ))}
          </thead>
          <tbody>
            {rows.length === 0 && (
              <tr><td colSpan={columns.length} className="text-loam-700">No entries match these filters.</td></tr>
            )}
            {rows.map((row) => (
              <tr
                key={row.id}
                id={`entry-${row.original.id}`}
                data-entry={row.original.id}
                data-depth={row.depth}
                className={[row.depth > 0 ? 'bg-loam-50' : '', row.original.breach ? 'outline outline-2 -outline-offset-2 outline-ember-500' : ''].join(' ')}
              >
                {row.getVisibleCells().map((cell) => <td key={cell.id}>{flexRender(cell.column.columnDef.cell, cell.getContext())}</td>)}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}

function choices(entries: LedgerEntry[], pick: (e: LedgerEntry) => [string, string]): [string, string][] {
  const seen = new Map(entries.map(pick));
  return [...seen].sort((a, b) => a[1].localeCompare(b[1], 'en'));
}
