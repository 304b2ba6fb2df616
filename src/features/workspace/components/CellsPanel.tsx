/**
 * The Cells list beside the image: every outline of the field with its pixel count and flags; select with a
 * click or the arrow keys, rename with F2 / Enter / double-click, mark as background, delete. On a stack each
 * cell also shows the slices it covers and its voxels, and the selected drawn outline's slices can be set.
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
  sizeZ = 1,
}: {
  outlines: Outline[];
  saved: Record<string, Cell>;
  selected: string | null;
  dispatch: (a: OutlineAction) => void;
  canEdit: boolean;
  unsaved: Set<string>;
  /** µm per pixel of the field: sizes are also given in µm² when known */
  pixelSizeUm?: number | null;
  /** slices of the field: on a stack each cell shows its z range and voxels */
  sizeZ?: number;
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
                  {o.geometry.kind !== 'label' && o.geometry.kind !== 'label3d' ? ` · ${o.geometry.kind === 'rect' ? 'box' : o.geometry.kind === 'freehand' ? 'trace' : o.geometry.kind}` : ''}
                </span>
                {sizeZ > 1 && c && !unsaved.has(o.key) && (
                  <span className="block text-xs text-ink-soft" data-testid="cell-depth">
                    slices {c.zRange[0]}–{c.zRange[1]} · {c.voxelCount.toLocaleString()} voxels
                  </span>
                )}
              </button>
            )}
            <span className="flex shrink-0 items-center gap-1">
              {o.role === 'background' && <Badge tone="warn">background</Badge>}
              {px !== null && px < SMALL_CELL_PIXELS && o.role === 'cell' && <Badge tone="warn">small</Badge>}
              {c?.excluded && <Badge tone="danger">excluded</Badge>}
            </span>
            {canEdit && isSel && sizeZ > 1 && o.geometry.kind !== 'label' && o.geometry.kind !== 'label3d' && (
              <SliceRange sizeZ={sizeZ} z={o.geometry.z ?? null} name={o.name} onChange={(z) => dispatch({ type: 'set-z', key: o.key, z })} />
            )}
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

/**
 * "slices A–B" of the selected outline: two whole numbers from 1 to the field's slice count, applied when both
 * make a range (A ≤ B); "All" returns to every slice (the default).
 */
function SliceRange({ sizeZ, z, name, onChange }: { sizeZ: number; z: [number, number] | null; name: string; onChange: (z: [number, number] | null) => void }) {
  const [a, setA] = useState(String(z?.[0] ?? 1));
  const [b, setB] = useState(String(z?.[1] ?? sizeZ));
  useEffect(() => {
    setA(String(z?.[0] ?? 1));
    setB(String(z?.[1] ?? sizeZ));
  }, [z, sizeZ]);
  const apply = (sa: string, sb: string) => {
    const from = Number(sa), to = Number(sb);
    if (!Number.isInteger(from) || !Number.isInteger(to) || from < 1 || to > sizeZ || from > to) return;
    onChange(from === 1 && to === sizeZ ? null : [from, to]);
  };
  const box = 'w-10 rounded border border-ink/20 px-1 py-0.5 text-xs';
  return (
    <span className="flex shrink-0 items-center gap-1 text-xs text-ink-soft" role="group" aria-label={`Slices of ${name}`}>
      slices
      <input type="number" className={box} min={1} max={sizeZ} value={a} aria-label={`First slice of ${name}`} onChange={(e) => (setA(e.target.value), apply(e.target.value, b))} onKeyDown={(e) => e.stopPropagation()} />
      –
      <input type="number" className={box} min={1} max={sizeZ} value={b} aria-label={`Last slice of ${name}`} onChange={(e) => (setB(e.target.value), apply(a, e.target.value))} onKeyDown={(e) => e.stopPropagation()} />
      {z && <WordButton label={`All slices for ${name}`} onClick={() => onChange(null)}>All</WordButton>}
    </span>
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
