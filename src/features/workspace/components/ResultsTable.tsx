/**
 * Per-cell results beside the image: the latest run's coefficients for each cell of this field (from the
 * Cell table API), flags for saturation and small cells; a row selects its cell on the image and the selected
 * cell's row is highlighted. Before any run, it says so and points to the live preview.
 */
import { Badge, cx } from '@/components';
import type { GridResponse } from '@shared/schemas/cell-table';
import type { Cell } from '@shared/schemas/cells';
import { SMALL_CELL_PIXELS } from './CellsPanel';
import { fmtCoef } from './LivePreview';
import { RESULTS_KEYS, byKey } from '@shared/coefficients';
import { ProvisionalBadge } from '@/features/recipes';
import { noun } from '@shared/format/plural';

/** The registry's `results` measures (shared/coefficients.ts) after the pixel count, with their short labels. */
const COLS = RESULTS_KEYS.filter((k) => k !== 'pixels').map((k) => ({ key: k, label: byKey(k).shortLabel, title: byKey(k).label }));

export function ResultsTable({ results, cells, selectedCellId, onSelect, fieldSaturated, loadError }: { results: GridResponse | undefined; cells: Cell[]; selectedCellId: number | null; onSelect: (cellId: number) => void; fieldSaturated: boolean; loadError: boolean }) {
  const rows = results?.rows ?? [];
  const measured = rows.filter((r) => r.measurementId !== null);
  const byCell = new Map(rows.map((r) => [r.cellId, r]));
  const list = cells.filter((c) => c.role === 'cell');
  const src = results?.source;
  const anyProvisional = measured.some((r) => r.provisional);
  return (
    <section aria-label="Per-cell results" data-testid="results-table">
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <h2 className="text-sm font-semibold">Per-cell results</h2>
        <span className="flex items-center gap-1.5 text-xs text-ink-soft">
          {anyProvisional && <ProvisionalBadge />}
          {measured.length ? `${runWords(src?.runId ? [src.runId] : measured.map((r) => r.runId))}${src?.recipeName ? ` · ${src.recipeName} v${src.recipeVersion}` : ''}` : loadError ? 'results could not be loaded' : 'no run on this field yet — the live preview shows the selected cell'}
        </span>
      </div>
      {list.length === 0 ? (
        <p className="mt-2 text-sm text-ink-soft">No cells to show.</p>
      ) : (
        <div className="mt-2 max-h-64 overflow-auto rounded border border-ink/10">
          <table className="w-full whitespace-nowrap text-xs">
            <thead className="sticky top-0 bg-paper text-xs text-ink-soft">
              <tr>
                <th className="px-1.5 py-1 text-left font-medium">Cell</th>
                <th className="px-1.5 py-1 text-right font-medium">Pixels</th>
                {COLS.map((c) => (
                  <th key={c.key} className="px-1.5 py-1 text-right font-medium" title={c.title}>
                    {c.label}
                  </th>
                ))}
                <th className="px-2 py-1 text-left font-medium">Flags</th>
              </tr>
            </thead>
            <tbody>
              {list.map((c) => {
                const r = byCell.get(c.id);
                const sel = c.id === selectedCellId;
                const saturated = r ? r.saturated : false;
                return (
                  <tr
                    key={c.id}
                    aria-selected={sel}
                    tabIndex={0}
                    onClick={() => onSelect(c.id)}
                    onKeyDown={(e) => (e.key === 'Enter' || e.key === ' ') && (e.preventDefault(), onSelect(c.id))}
                    className={cx('cursor-pointer border-t border-ink/5 hover:bg-ink/5 focus-visible:outline-2 focus-visible:outline-accent', sel && 'bg-accent-soft/70')}
                  >
                    <td className="px-1.5 py-1">{c.name}</td>
                    <td className="px-1.5 py-1 text-right font-mono">{c.pixelCount.toLocaleString()}</td>
                    {COLS.map((k) => (
                      <td key={k.key} className="px-1.5 py-1 text-right font-mono">
                        {r ? fmtCoef(r[k.key]) : '—'}
                      </td>
                    ))}
                    <td className="px-2 py-1">
                      <span className="flex gap-1">
                        {(saturated || (!r && fieldSaturated)) && <Badge tone="warn">{saturated ? 'saturated' : 'field saturated'}</Badge>}
                        {c.pixelCount < SMALL_CELL_PIXELS && <Badge tone="warn">small</Badge>}
                        {c.excluded && <Badge tone="danger">excluded</Badge>}
                        {r?.provisional && r.measurementId !== null && <ProvisionalBadge />}
                      </span>
                    </td>
                  </tr>
                );
              })}
            </tbody>
          </table>
        </div>
      )}
    </section>
  );
}

/** "latest run #3", or "runs #2, #3" when the cells' latest measurements come from several runs. */
function runWords(runIds: (number | null)[]) {
  const ids = [...new Set(runIds.filter((id): id is number => id !== null))].sort((a, b) => a - b);
  if (ids.length === 0) return 'measured';
  return `${ids.length === 1 ? 'latest ' : ''}${noun(ids.length, 'run')} ${ids.map((id) => `#${id}`).join(', ')}`;
}
