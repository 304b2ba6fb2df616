/**
 * The Cell table: every cell of a study with its latest measurement (server-side filters, sorting and paging,
 * state kept in the URL), column choice, exclusions with reasons and undo, and a link into the field workspace.
 */
import { useId, useMemo, useState } from 'react';
import { Link, useSearchParams } from 'react-router';
import { flexRender, getCoreRowModel, useReactTable, type ColumnDef, type SortingState, type VisibilityState } from '@tanstack/react-table';
import { Badge, Button, Caution, ErrorNotice, Loading, MeasurementCautions, inputClass } from '@/components';
import { ProvisionalBadge } from '@/features/recipes';
import { COLUMN_LABELS, DEFAULT_VISIBLE_COLUMNS, NUMERIC_COLUMNS, SORT_KEYS, formatColumn, type GridRow, type NumericColumn, type SortKey } from '@shared/schemas/cell-table';
import type { StudyDetail } from '@shared/schemas/studies';
import { NumberText, readNumberText } from '@shared/schemas/common';
import { useCellTable } from '../api/useCellTable';
import { SourceSelect } from './SourceSelect';
import { useExcludeCell } from '../api/useExcludeCell';
import { useRestoreCell } from '../api/useRestoreCell';
import { ExcludeDialog } from './ExcludeDialog';
import { formatDateTime } from '@shared/format/datetime';
import { plural, noun } from '@shared/format/plural';

const DEFAULT_VISIBLE = new Set(DEFAULT_VISIBLE_COLUMNS);
const FILTER_KEYS = ['recipeId', 'runId', 'conditionId', 'coverslipId', 'excluded', 'saturated', 'provisional', 'measured', 'range', 'q', 'sort', 'dir', 'page', 'pageSize'];

/** empty for a missing value; otherwise as the registry's format says (shared/format/number.ts: never "-0.000") */
const fnum = (v: number | null, k: NumericColumn) => (v === null ? '' : formatColumn(k, v));

export function CellTableView({ study }: { study: StudyDetail }) {
  const studyId = study.id;
  const [params, setParams] = useSearchParams();
  const apiParams = useMemo(() => {
    const p = new URLSearchParams();
    for (const k of FILTER_KEYS) for (const v of params.getAll(k)) p.append(k, v);
    if (!p.get('pageSize')) p.set('pageSize', '50');
    return p;
  }, [params]);
  const grid = useCellTable(studyId, apiParams);
  const exclude = useExcludeCell(studyId);
  const restore = useRestoreCell(studyId);
  const [excluding, setExcluding] = useState<GridRow | null>(null);
  const [lastExcluded, setLastExcluded] = useState<GridRow | null>(null);
  const [actionError, setActionError] = useState<unknown>(null);
  const [visibility, setVisibility] = useState<VisibilityState>(() => {
    const saved = params.get('cols');
    const vis = saved ? new Set(saved.split(',')) : DEFAULT_VISIBLE;
    return Object.fromEntries(['condition', 'coverslip', 'field', 'cell', 'slices', ...NUMERIC_COLUMNS, 'thresholdMethod', 'saturated', 'provisional', 'excluded'].map((k) => [k, vis.has(k)]));
  });
  const canExclude = grid.data?.canExclude ?? false;

  const update = (changes: Record<string, string | string[] | null>, resetPage = true) => {
    const next = new URLSearchParams(params);
    for (const [k, v] of Object.entries(changes)) {
      next.delete(k);
      if (Array.isArray(v)) v.forEach((x) => next.append(k, x));
      else if (v !== null && v !== '') next.set(k, v);
    }
    if (resetPage) next.delete('page');
    setParams(next, { replace: true });
  };

  const sort = (params.get('sort') ?? 'condition') as SortKey;
  const dir = params.get('dir') === 'desc' ? 'desc' : 'asc';
  const sorting: SortingState = [{ id: sort, desc: dir === 'desc' }];

  const columns = useMemo<ColumnDef<GridRow>[]>(() => {
    const text = (id: keyof GridRow & string, cell?: ColumnDef<GridRow>['cell']): ColumnDef<GridRow> => ({
      id,
      accessorKey: id,
      header: COLUMN_LABELS[id] ?? id,
      ...(cell ? { cell } : {}),
      enableSorting: (SORT_KEYS as readonly string[]).includes(id),
    });
    return [
      text('condition'),
      text('coverslip'),
      text('field'),
      text('cell', ({ row }) => (
        <Link className="text-accent-dark underline-offset-2 hover:underline" to={`/studies/${studyId}/fields/${row.original.fieldId}?cell=${row.original.cellId}`} title="Open in the field workspace">
          {row.original.cell}
        </Link>
      )),
      text('slices'),
      ...NUMERIC_COLUMNS.map<ColumnDef<GridRow>>((k) => ({
        id: k,
        accessorKey: k,
        header: COLUMN_LABELS[k],
        meta: { numeric: true },
        cell: ({ row }) => fnum(row.original[k], k),
      })),
      text('thresholdMethod'),
      text('saturated', ({ row }) => (row.original.saturated ? <Badge tone="warn">saturated</Badge> : '')),
      text('provisional', ({ row }) => (row.original.provisional ? <ProvisionalBadge /> : row.original.measurementId === null ? <span className="text-ink-faint">not measured</span> : '')),
      text('excluded', ({ row }) =>
        row.original.excluded ? (
          <span title={`${row.original.exclusionReason ?? ''}${row.original.excludedBy ? ` (by ${row.original.excludedBy}, ${formatDateTime(row.original.excludedAt)})` : ''}`}>
            <Badge tone="danger">excluded</Badge> <span className="text-xs text-ink-soft">{row.original.exclusionReason}</span>
          </span>
        ) : (
          ''
        ),
      ),
    ];
  }, [studyId]);

  const table = useReactTable({
    data: grid.data?.rows ?? [],
    columns,
    getCoreRowModel: getCoreRowModel(),
    manualSorting: true,
    manualPagination: true,
    manualFiltering: true,
    rowCount: grid.data?.total ?? 0,
    state: { sorting, columnVisibility: visibility },
    onColumnVisibilityChange: (u) => {
      const next = typeof u === 'function' ? u(visibility) : u;
      setVisibility(next);
      const cols = Object.entries(next).filter(([, v]) => v).map(([k]) => k);
      const p = new URLSearchParams(params);
      p.set('cols', cols.join(','));
      setParams(p, { replace: true });
    },
    onSortingChange: (u) => {
      const next = typeof u === 'function' ? u(sorting) : u;
      const s = next[0];
      update({ sort: s?.id ?? null, dir: s?.desc ? 'desc' : 'asc' });
    },
  });

  const page = Number(params.get('page') ?? 0);
  const pageSize = Number(apiParams.get('pageSize'));
  const total = grid.data?.total ?? 0;
  const pages = Math.max(1, Math.ceil(total / pageSize));
  const condId = params.get('conditionId') ?? '';
  const coverslips = study.conditions.filter((c) => !condId || String(c.id) === condId).flatMap((c) => c.coverslips.map((s) => ({ ...s, conditionName: c.name })));
  const ranges = params.getAll('range');
  const [rangeCol, setRangeCol] = useState<string>('pearson');
  const [rangeMin, setRangeMin] = useState('');
  const [rangeMax, setRangeMax] = useState('');
  const [rangeError, setRangeError] = useState<{ box: 'from' | 'to'; message: string } | null>(null);
  const rangeErrorId = useId();
  const visibleExport = Object.entries(visibility)
    .filter(([, v]) => v)
    .map(([k]) => k);
  const csvParams = new URLSearchParams(apiParams);
  csvParams.delete('page');
  csvParams.delete('pageSize');
  csvParams.set('columns', ['cellId', ...visibleExport, ...(visibility.excluded ? ['exclusionReason'] : [])].join(','));

  const pageRows = grid.data?.rows ?? [];
  const provisionalOnPage = pageRows.filter((r) => r.provisional && r.measurementId !== null).length;
  const saturatedOnPage = pageRows.filter((r) => r.saturated).length;

  const doExclude = async (reason: string) => {
    if (!excluding) return;
    await exclude.mutateAsync({ cellId: excluding.cellId, reason });
    setLastExcluded(excluding);
  };
  const doRestore = async (row: GridRow) => {
    setActionError(null);
    try {
      await restore.mutateAsync({ cellId: row.cellId });
      if (lastExcluded?.cellId === row.cellId) setLastExcluded(null);
    } catch (e) {
      setActionError(e);
    }
  };

  return (
    <div className="space-y-4">
      {/* source and filters */}
      <div className="flex flex-wrap items-end gap-3 text-sm" role="search" aria-label="Filter cells">
        <SourceSelect studyId={studyId} recipeId={params.get('recipeId')} runId={params.get('runId')} onChange={(v) => update(v)} />
        <label className="flex flex-col gap-1 font-medium">
          Condition
          <select className={inputClass()} value={condId} onChange={(e) => update({ conditionId: e.target.value, coverslipId: null })}>
            <option value="">all</option>
            {study.conditions.map((c) => (
              <option key={c.id} value={c.id}>
                {c.name}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col gap-1 font-medium">
          Coverslip
          <select className={inputClass()} value={params.get('coverslipId') ?? ''} onChange={(e) => update({ coverslipId: e.target.value })}>
            <option value="">all</option>
            {coverslips.map((s) => (
              <option key={s.id} value={s.id}>
                {s.conditionName} · {s.name}
              </option>
            ))}
          </select>
        </label>
        {(
          [
            ['excluded', 'Excluded'],
            ['saturated', 'Saturated'],
            ['provisional', 'Provisional'],
            ['measured', 'Measured'],
          ] as const
        ).map(([k, label]) => (
          <label key={k} className="flex flex-col gap-1 font-medium">
            {label}
            <select className={inputClass()} value={params.get(k) ?? 'any'} onChange={(e) => update({ [k]: e.target.value === 'any' ? null : e.target.value })}>
              <option value="any">any</option>
              <option value="yes">yes</option>
              <option value="no">no</option>
            </select>
          </label>
        ))}
        <label className="flex flex-col gap-1 font-medium">
          Cell name
          <input className={inputClass()} style={{ width: '9rem' }} defaultValue={params.get('q') ?? ''} onKeyDown={(e) => e.key === 'Enter' && update({ q: (e.target as HTMLInputElement).value })} placeholder="press Enter" />
        </label>
      </div>
      <form
        className="flex flex-wrap items-end gap-2 text-sm"
        onSubmit={(e) => {
          e.preventDefault();
          if (rangeMin.trim() === '' && rangeMax.trim() === '') return;
          const lo = rangeMin.trim() === '' ? null : readNumberText(NumberText('from'), rangeMin);
          const hi = rangeMax.trim() === '' ? null : readNumberText(NumberText('to', lo?.value != null ? { min: lo.value } : {}), rangeMax);
          const error = lo?.error ? { box: 'from' as const, message: lo.error } : hi?.error ? { box: 'to' as const, message: hi.error } : null;
          setRangeError(error);
          if (error) return;
          update({ range: [...ranges.filter((r) => !r.startsWith(`${rangeCol}:`)), `${rangeCol}:${lo?.value ?? ''}:${hi?.value ?? ''}`] });
          setRangeMin('');
          setRangeMax('');
        }}
      >
        <label className="flex flex-col gap-1 font-medium">
          Value range
          <select className={inputClass()} value={rangeCol} onChange={(e) => setRangeCol(e.target.value)}>
            {NUMERIC_COLUMNS.map((k) => (
              <option key={k} value={k}>
                {COLUMN_LABELS[k]}
              </option>
            ))}
          </select>
        </label>
        <RangeBox which="from" value={rangeMin} onChange={setRangeMin} errorId={rangeError?.box === 'from' ? rangeErrorId : undefined} />
        <RangeBox which="to" value={rangeMax} onChange={setRangeMax} errorId={rangeError?.box === 'to' ? rangeErrorId : undefined} />
        <Button type="submit" size="sm">
          Add range
        </Button>
        {rangeError && (
          <span id={rangeErrorId} role="alert" className="text-xs text-danger">
            {rangeError.message}
          </span>
        )}
        {ranges.map((r) => {
          const [c, lo, hi] = r.split(':');
          return (
            <span key={r} className="inline-flex items-center gap-1 rounded-full bg-accent-soft px-2 py-0.5 text-xs text-accent-dark">
              {COLUMN_LABELS[c] ?? c} {lo || '−∞'} … {hi || '∞'}
              <button type="button" aria-label={`remove range ${COLUMN_LABELS[c] ?? c}`} className="px-1" onClick={() => update({ range: ranges.filter((x) => x !== r) })}>
                ✕
              </button>
            </span>
          );
        })}
        <details className="relative ml-auto">
          <summary className="cursor-pointer rounded-md border border-ink/20 bg-white px-2.5 py-1 font-medium">Columns</summary>
          <div className="absolute right-0 z-20 mt-1 grid max-h-80 w-64 grid-cols-1 gap-1 overflow-auto rounded-md border border-ink/10 bg-white p-3 shadow-lg">
            {table.getAllLeafColumns().map((col) => (
              <label key={col.id} className="flex items-center gap-2">
                <input type="checkbox" checked={col.getIsVisible()} onChange={col.getToggleVisibilityHandler()} />
                {COLUMN_LABELS[col.id] ?? col.id}
              </label>
            ))}
          </div>
        </details>
        <a className="rounded-md border border-ink/20 bg-white px-2.5 py-1 font-medium hover:bg-ink/5" href={`/api/studies/${studyId}/cells.csv?${csvParams.toString()}`} download>
          Download CSV
        </a>
      </form>

      {lastExcluded && (
        <Caution tone="info">
          {lastExcluded.cell} ({lastExcluded.field}) is excluded.{' '}
          <Button size="sm" variant="ghost" onClick={() => void doRestore(lastExcluded)} pending={restore.isPending}>
            Undo
          </Button>
        </Caution>
      )}
      <ErrorNotice error={actionError} />
      {grid.isError && <ErrorNotice error={grid.error} />}
      {grid.data && grid.data.source.recipeId === null && <Caution tone="info">No measurements yet: cells are listed, but their coefficients appear after a run.</Caution>}
      {provisionalOnPage > 0 && (
        <Caution>
          <span className="mr-2 align-middle">
            <ProvisionalBadge />
          </span>
          {plural(provisionalOnPage, 'cell')} on this page {noun(provisionalOnPage, 'was', 'were')} measured with a recipe version that is not
          approved; {provisionalOnPage === 1 ? 'its numbers' : 'their numbers'} may change.
        </Caution>
      )}

      {grid.isPending ? (
        <Loading />
      ) : (
        <div className="overflow-x-auto rounded-lg border border-ink/10 bg-white">
          <table className="min-w-full text-sm" data-testid="cell-table" aria-busy={grid.isFetching || undefined}>
            <thead className="sticky top-0 bg-paper">
              {table.getHeaderGroups().map((hg) => (
                <tr key={hg.id} className="border-b border-ink/10">
                  {canExclude && <th className="px-2 py-1.5 text-left font-medium text-ink-soft">Review</th>}
                  {hg.headers.map((h) => {
                    const s = h.column.getIsSorted();
                    const numeric = (h.column.columnDef.meta as { numeric?: boolean } | undefined)?.numeric;
                    return (
                      <th key={h.id} className={`whitespace-nowrap px-2 py-1.5 font-medium text-ink-soft ${numeric ? 'text-right' : 'text-left'}`} aria-sort={s ? (s === 'desc' ? 'descending' : 'ascending') : undefined}>
                        {h.column.getCanSort() ? (
                          <button type="button" className="hover:text-ink" onClick={h.column.getToggleSortingHandler()}>
                            {flexRender(h.column.columnDef.header, h.getContext())}
                            {s === 'asc' ? ' ▲' : s === 'desc' ? ' ▼' : ''}
                          </button>
                        ) : (
                          flexRender(h.column.columnDef.header, h.getContext())
                        )}
                      </th>
                    );
                  })}
                </tr>
              ))}
            </thead>
            <tbody>
              {table.getRowModel().rows.map((row) => (
                <tr key={row.id} className={`border-b border-ink/5 ${row.original.excluded ? 'bg-danger-soft/40 text-ink-soft' : ''}`} data-cell-id={row.original.cellId}>
                  {canExclude && (
                    <td className="px-2 py-1">
                      {row.original.excluded ? (
                        <Button size="sm" variant="ghost" onClick={() => void doRestore(row.original)}>
                          Restore<span className="sr-only"> {row.original.cell} ({row.original.field})</span>
                        </Button>
                      ) : (
                        // a quiet action on every row; the red, irreversible-looking step is only inside the dialog
                        <Button size="sm" variant="ghost" onClick={() => setExcluding(row.original)}>
                          Exclude…<span className="sr-only"> {row.original.cell} ({row.original.field})</span>
                        </Button>
                      )}
                    </td>
                  )}
                  {row.getVisibleCells().map((c) => {
                    const numeric = (c.column.columnDef.meta as { numeric?: boolean } | undefined)?.numeric;
                    return (
                      <td key={c.id} className={`whitespace-nowrap px-2 py-1 ${numeric ? 'text-right font-mono' : ''}`}>
                        {flexRender(c.column.columnDef.cell, c.getContext())}
                      </td>
                    );
                  })}
                </tr>
              ))}
              {table.getRowModel().rows.length === 0 && (
                <tr>
                  <td colSpan={99} className="px-3 py-6 text-center text-ink-soft">
                    No cells match these filters.
                  </td>
                </tr>
              )}
            </tbody>
          </table>
        </div>
      )}

      <nav className="flex flex-wrap items-center gap-3 text-sm" aria-label="Pages">
        <Button size="sm" disabled={page <= 0} onClick={() => update({ page: String(page - 1) }, false)}>
          Previous
        </Button>
        <span>
          Page {Math.min(page + 1, pages)} of {pages} · {plural(total, 'cell')}
        </span>
        <Button size="sm" disabled={page + 1 >= pages} onClick={() => update({ page: String(page + 1) }, false)}>
          Next
        </Button>
        <label className="ml-2 flex items-center gap-1">
          Rows per page
          <select className={inputClass()} style={{ width: '5.5rem' }} value={pageSize} onChange={(e) => update({ pageSize: e.target.value })}>
            {[25, 50, 100, 200, 500].map((n) => (
              <option key={n}>{n}</option>
            ))}
          </select>
        </label>
      </nav>

      <MeasurementCautions saturatedCells={saturatedOnPage} where="on this page" />

      <ExcludeDialog cellName={excluding ? `${excluding.cell} (${excluding.field})` : ''} open={!!excluding} onClose={() => setExcluding(null)} onSubmit={doExclude} />
    </div>
  );
}

/** One end of the value-range filter; `errorId` (the message's id) is set while this end is refused. */
function RangeBox({ which, value, onChange, errorId }: { which: 'from' | 'to'; value: string; onChange: (text: string) => void; errorId: string | undefined }) {
  return (
    <div className="w-24">
      <input
        aria-label={which}
        aria-invalid={errorId !== undefined}
        aria-describedby={errorId}
        className={inputClass(errorId !== undefined)}
        inputMode="decimal"
        placeholder={which}
        value={value}
        onChange={(e) => onChange(e.target.value)}
      />
    </div>
  );
}
