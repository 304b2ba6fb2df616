/**
 * The Cells list beside the image: every outline of the field with its pixel count and flags; select with a
 * click or the arrow keys, rename with F2 / Enter / double-click, mark as background, delete.
 */
import { useEffect, useRef, useState } from 'react';
import { Badge, cx } from '@/components';
import type { Cell } from '@shared/schemas/cells';
import { formatAmount, originDetail, originLabel } from '@shared/format/origin';
import type { Outline, OutlineAction } from '../lib/outlineState';

/** Cells smaller than this are flagged: too few pixels for stable coefficients (common practice, decided here). */
export const SMALL_CELL_PIXELS = 50;


export function CellsPanel({
  outlines,
  saved,
  selected,
  dispatch,
  canEdit,
  unsaved,
  pixelSizeUm = null,
}: {
  outlines: Outline[];
  saved: Record<string, Cell>;
  selected: string | null;
  dispatch: (a: OutlineAction) => void;
  canEdit: boolean;
  unsaved: Set<string>;
  /** µm per pixel of the field: sizes are also given in µm² when known */
  pixelSizeUm?: number | null;
}) {
  const [editing, setEditing] = useState<string | null>(null);
  const list = useRef<HTMLUListElement>(null);
  useEffect(() => {
    if (!selected) return;
    // scroll the list's own box only: scrollIntoView would scroll the page too and move the image under the pointer
    const item = list.current?.querySelector(`[data-key="${selected}"]`);
    const box = list.current?.parentElement;
    if (!item || !box) return;
    const r = item.getBoundingClientRect(), b = box.getBoundingClientRect();
    if (r.top < b.top) box.scrollTop -= b.top - r.top;
    else if (r.bottom > b.bottom) box.scrollTop += r.bottom - b.bottom;
  }, [selected]);

  if (!outlines.length)
    return <p className="px-1 py-3 text-sm text-ink-soft">No cells yet. Pick an outline tool (B box, E ellipse, P polygon, T trace) and draw on the image, import a label image, or let Syntopy find the cells.</p>;

  const move = (d: number) => {
    const i = outlines.findIndex((o) => o.key === selected);
    const j = Math.max(0, Math.min(outlines.length - 1, i < 0 ? 0 : i + d));
    dispatch({ type: 'select', key: outlines[j].key });
    (list.current?.querySelector(`[data-key="${outlines[j].key}"] button`) as HTMLElement | null)?.focus();
  };

  return (
    <ul ref={list} className="divide-y divide-ink/8" aria-label="Cells" data-testid="cells-list">
      {outlines.map((o) => {
        const c = saved[o.key];
        const isSel = o.key === selected;
        const px = c && !unsaved.has(o.key) ? c.pixelCount : null;
        return (
          <li key={o.key} data-key={o.key} className={cx('group flex items-center gap-2 px-1 py-1.5', isSel && 'bg-accent-soft/70')}>
            {editing === o.key ? (
              <RenameInput
                initial={o.name}
                onDone={(name) => {
                  setEditing(null);
                  if (name !== null) dispatch({ type: 'rename', key: o.key, name });
                }}
              />
            ) : (
              <button
                type="button"
                className="min-w-0 flex-1 rounded text-left text-sm focus-visible:outline-2 focus-visible:outline-accent"
                aria-pressed={isSel}
                onClick={() => dispatch({ type: 'select', key: isSel ? null : o.key })}
                onDoubleClick={() => canEdit && setEditing(o.key)}
                onKeyDown={(e) => {
                  if (e.key === 'ArrowDown') (e.preventDefault(), move(1));
                  else if (e.key === 'ArrowUp') (e.preventDefault(), move(-1));
                  else if ((e.key === 'F2' || (e.key === 'Enter' && isSel)) && canEdit) (e.preventDefault(), setEditing(o.key));
                }}
              >
                <span className="block truncate font-medium">{o.name}</span>
                <span className="block text-xs text-ink-soft" title={originDetail(saved[o.key]?.origin ?? { how: 'drawn' })} data-testid="cell-origin">
                  {px !== null ? `${px.toLocaleString()} px${pixelSizeUm ? ` (${formatAmount(px * pixelSizeUm * pixelSizeUm)} µm²)` : ''}` : 'saving…'} · {originLabel(saved[o.key]?.origin ?? { how: 'drawn' })}
                  {o.geometry.kind !== 'label' ? ` · ${o.geometry.kind === 'rect' ? 'box' : o.geometry.kind === 'freehand' ? 'trace' : o.geometry.kind}` : ''}
                </span>
              </button>
            )}
            <span className="flex shrink-0 items-center gap-1">
              {o.role === 'background' && <Badge tone="warn">background</Badge>}
              {px !== null && px < SMALL_CELL_PIXELS && o.role === 'cell' && <Badge tone="warn">small</Badge>}
              {c?.excluded && <Badge tone="danger">excluded</Badge>}
            </span>
            {canEdit && (
              <span className="flex shrink-0 gap-0.5">
                <WordButton label={`Rename ${o.name}`} onClick={() => setEditing(o.key)}>
                  Rename
                </WordButton>
                <WordButton
                  label={o.role === 'background' ? `Use ${o.name} as a cell` : `Mark ${o.name} as background`}
                  onClick={() => dispatch({ type: 'set-role', key: o.key, role: o.role === 'background' ? 'cell' : 'background' })}
                >
                  {o.role === 'background' ? 'Cell' : 'Background'}
                </WordButton>
                <WordButton label={`Delete ${o.name}`} onClick={() => dispatch({ type: 'delete', key: o.key })}>
                  Delete
                </WordButton>
              </span>
            )}
          </li>
        );
      })}
    </ul>
  );
}

/** A small worded button; its accessible name (and tooltip) says which cell it acts on and begins with the visible word. */
function WordButton({ label, onClick, children }: { label: string; onClick: () => void; children: React.ReactNode }) {
  return (
    <button type="button" title={label} aria-label={label} onClick={onClick} className="rounded px-1 py-0.5 text-[11px] leading-4 text-ink-soft underline-offset-2 hover:bg-ink/10 hover:text-ink hover:underline focus-visible:outline-2 focus-visible:outline-accent">
      {children}
    </button>
  );
}

function RenameInput({ initial, onDone }: { initial: string; onDone: (name: string | null) => void }) {
  const [v, setV] = useState(initial);
  return (
    <input
      autoFocus
      aria-label="Cell name"
      className="min-w-0 flex-1 rounded border border-accent px-1.5 py-0.5 text-sm"
      value={v}
      maxLength={120}
      onChange={(e) => setV(e.target.value)}
      onFocus={(e) => e.target.select()}
      onKeyDown={(e) => {
        if (e.key === 'Enter') onDone(v.trim() || null);
        else if (e.key === 'Escape') onDone(null);
        e.stopPropagation();
      }}
      onBlur={() => onDone(v.trim() || null)}
    />
  );
}
