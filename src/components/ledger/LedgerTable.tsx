import { Fragment, useEffect, useMemo, useState } from 'react';
import {
  createColumnHelper, flexRender, getCoreRowModel, getExpandedRowModel, getFilteredRowModel, getSortedRowModel, useReactTable,
  type ColumnFiltersState, type FilterFn, type RowData, type SortDirection, type SortingState,
} from '@tanstack/react-table';
import { formatDate } from '../../lib/format';
import type { LedgerEntry } from '../../db/ledger.queries';
import { buildLedgerRows, formatBase, formatEntryQuantities, formatRecordedAt, methodLabels, quantityOrder, type LedgerRow } from './ledger-view';
import EntryDetails from './EntryDetails';
import { EntryNotes, EntryPills } from './EntryNotes';
import type { CorrectionSaved } from './CorrectionForm';

export type LedgerTableProps = {
  entries: LedgerEntry[];
  /** Called once a correction is saved; resolves when the ledger has the new entry. */
  onCorrected?: (saved: CorrectionSaved) => Promise<void>;
};

declare module '@tanstack/react-table' {
  /** Which screens show a column: the narrowest keeps the date, species, quantity and the details button. */
  interface ColumnMeta<TData extends RowData, TValue> { className?: string }
}
const fromSmall = { className: 'hidden sm:table-cell' };
const fromLarge = { className: 'hidden lg:table-cell' };

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
    meta: fromSmall,
    cell: ({ row }) => (
      <span style={{ paddingLeft: `${Math.min(row.depth, 3) * 0.75}rem` }} className="inline-block whitespace-nowrap">
        {row.depth > 0 && <span aria-hidden="true">↳ </span>}
        {formatDate(row.original.countedOn)}
      </span>
    ),
  }),
  column.accessor('parcelName', { id: 'parcel', header: 'Parcel', filterFn: sameParcel, meta: fromSmall }),
  column.accessor('speciesName', {
    id: 'species',
    header: 'Species',
    filterFn: sameSpecies,
    cell: ({ row }) => (
      // A correction is indented under its entry on a phone, where the date column (which indents it on a wide screen) is hidden.
      <div className={`space-y-1 ${row.depth > 0 ? 'pl-3 sm:pl-0' : ''}`}>
        <div>
          <span className="block text-xs text-loam-700 sm:hidden" data-testid="entry-day">
            {row.depth > 0 && <span aria-hidden="true">↳ </span>}
            {formatDate(row.original.countedOn)}
          </span>
          {row.original.speciesName}
          <span className="hidden text-xs italic text-loam-600 sm:block">{row.original.scientificName}</span>
          <span className="block text-xs text-loam-700 sm:hidden">{row.original.parcelName}</span>
        </div>
        {/* The state of the entry stays in view on a narrow screen; from a wide one it sits in Notes. */}
        <div className="lg:hidden"><EntryPills row={row.original} /></div>
      </div>
    ),
  }),
  column.accessor((r) => methodLabels[r.method], { id: 'method', header: 'Method', meta: fromLarge }),
  column.accessor((r) => r.quantities[0]?.baseQuantity ?? '0', {
    id: 'quantity',
    header: 'Quantity',
    sortingFn: (a, b) => quantityOrder(a.original, b.original),
    sortDescFirst: true,
    cell: ({ row }) => <span className="font-semibold" data-testid="entry-quantity">{formatEntryQuantities(row.original)}</span>,
  }),
  column.accessor((r) => r.quantities.map((q) => q.baseQuantity).join(' '), {
    id: 'base',
    header: 'In base units',
    sortingFn: (a, b) => quantityOrder(a.original, b.original),
    sortDescFirst: true,
    meta: fromLarge,
    cell: ({ row }) => <span className="whitespace-nowrap">{row.original.quantities.map((q) => formatBase(q.baseQuantity, q.measure)).join(' and ')}</span>,
  }),
  column.accessor('recordedAt', {
    header: 'Recorded',
    sortingFn: 'text',
    sortDescFirst: true,
    meta: fromLarge,
    cell: ({ row, getValue }) => <time dateTime={getValue()}>{formatRecordedAt(getValue(), row.original.timeZone)}</time>,
  }),
  column.display({
    id: 'notes',
    header: 'Notes',
    meta: fromLarge,
    cell: ({ row }) => (
      <div className="min-w-[9rem] space-y-1">
        <EntryPills row={row.original} />
        <EntryNotes row={row.original} />
      </div>
    ),
  }),
];

const ariaSort = (direction: false | SortDirection) => (direction === 'asc' ? 'ascending' : direction === 'desc' ? 'descending' : 'none');

/**
 * The forager's ledger: sortable by any column header, filtered by text, parcel and species. Each
 * row opens its details: what a narrow screen leaves out, the photo, and "Correct this entry".
 */
export default function LedgerTable({ entries, onCorrected }: LedgerTableProps) {
  const data = useMemo(() => buildLedgerRows(entries), [entries]);
  const parcels = useMemo(() => choices(entries, (e) => [e.parcelId, e.parcelName]), [entries]);
  const species = useMemo(() => choices(entries, (e) => [e.speciesId, e.speciesName]), [entries]);
  const [sorting, setSorting] = useState<SortingState>([]);
  const [columnFilters, setColumnFilters] = useState<ColumnFiltersState>([]);
  const [globalFilter, setGlobalFilter] = useState('');
  const [open, setOpen] = useState<Record<string, boolean>>({});
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
  const span = columns.length + 1;

  return (
    <div data-testid="ledger-table" data-hydrated={hydrated ? 'true' : undefined}>
      <div className="flex flex-wrap items-end gap-3">
        <div className="w-full sm:w-auto sm:min-w-[12rem] sm:flex-1">
          <label htmlFor="ledger-search" className="field-label">Search</label>
          <input id="ledger-search" type="search" className="field-input" placeholder="species, parcel, reason…" value={globalFilter} onChange={(e) => setGlobalFilter(e.target.value)} />
        </div>
        <div className="min-w-0 flex-1 sm:flex-none">
          <label htmlFor="ledger-parcel" className="field-label">Parcel</label>
          <select id="ledger-parcel" className="field-input" value={filterValue('parcel')} onChange={(e) => setFilter('parcel', e.target.value)}>
            <option value="">All parcels</option>
            {parcels.map(([id, name]) => <option key={id} value={id}>{name}</option>)}
          </select>
        </div>
        <div className="min-w-0 flex-1 sm:flex-none">
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
        {/* A long word (a parcel's name, a reason) breaks rather than widen the table past its frame. */}
        <table className="table [&_td]:[overflow-wrap:anywhere]">
          <caption className="sr-only">Your harvest entries, newest first; corrections sit under the entry they correct. Select a column heading to sort; open a row's details to see its photo or correct it.</caption>
          <thead>
            {table.getHeaderGroups().map((group) => (
              <tr key={group.id}>
                {group.headers.map((header) => {
                  const label = flexRender(header.column.columnDef.header, header.getContext());
                  const className = header.column.columnDef.meta?.className;
                  if (!header.column.getCanSort()) return <th key={header.id} scope="col" className={`${className ?? ''} px-2 sm:px-3`}>{label}</th>;
                  const sorted = header.column.getIsSorted();
                  return (
                    <th key={header.id} scope="col" aria-sort={ariaSort(sorted)} className={`${className ?? ''} px-2 sm:px-3`}>
                      <button type="button" className="inline-flex items-center gap-1 text-left font-semibold hover:underline" onClick={header.column.getToggleSortingHandler()}>
                        {label}
                        <span aria-hidden="true" className="text-xs text-loam-600">{sorted === 'asc' ? '▲' : sorted === 'desc' ? '▼' : '↕'}</span>
                      </button>
                    </th>
                  );
                })}
                <th scope="col" className="w-0 px-2 sm:px-3"><span className="sr-only">Details</span></th>
              </tr>
            ))}
          </thead>
          <tbody>
            {rows.length === 0 && (
              <tr><td colSpan={span} className="text-loam-700">No entries match these filters.</td></tr>
            )}
            {rows.map((row) => {
              const entry = row.original;
              const isOpen = Boolean(open[entry.id]);
              const detailsId = `entry-${entry.id}-details`;
              return (
                <Fragment key={row.id}>
                  <tr
                    id={`entry-${entry.id}`}
                    data-entry={entry.id}
                    data-depth={row.depth}
                    className={[row.depth > 0 ? 'bg-loam-50' : '', entry.breach ? 'outline outline-2 -outline-offset-2 outline-ember-500' : '', isOpen ? '[&>td]:border-b-0' : ''].join(' ')}
                  >
                    {row.getVisibleCells().map((cell) => <td key={cell.id} className={`${cell.column.columnDef.meta?.className ?? ''} px-2 sm:px-3`}>{flexRender(cell.column.columnDef.cell, cell.getContext())}</td>)}
                    <td className="px-2 text-right sm:px-3">
                      <button
                        type="button" className="button-quiet whitespace-nowrap px-2 py-1 text-sm" aria-expanded={isOpen} aria-controls={detailsId} data-testid="entry-toggle"
                        onClick={() => setOpen((o) => ({ ...o, [entry.id]: !isOpen }))}
                      >
                        <span className="sr-only">{isOpen ? 'Hide details of' : 'Details of'} {entry.speciesName}, {formatDate(entry.countedOn)} </span>
                        <span aria-hidden="true">{isOpen ? 'Less ▴' : 'More ▾'}</span>
                      </button>
                    </td>
                  </tr>
                  {isOpen && (
                    <tr id={detailsId} data-details-for={entry.id} className={row.depth > 0 ? 'bg-loam-50' : ''}>
                      <td colSpan={span} className="px-2 pt-0 sm:px-3">
                        <EntryDetails row={entry} entries={entries} onCorrected={onCorrected} />
                      </td>
                    </tr>
                  )}
                </Fragment>
              );
            })}
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

