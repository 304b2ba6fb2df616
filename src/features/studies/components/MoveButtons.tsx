/** Up / down buttons to reorder an item; each names what it moves, so a screen reader user knows. */
import { Button } from '@/components/Button';

export function MoveButtons({ idPrefix, what, index, count, onMove, disabled }: { idPrefix: string; what: string; index: number; count: number; onMove: (dir: -1 | 1) => void; disabled?: boolean }) {
  return (
    <span className="inline-flex gap-0.5" role="group" aria-label={`Order of ${what}`}>
      <Button id={`${idPrefix}-up`} size="sm" variant="ghost" aria-label={`Move ${what} up`} title="Move up" disabled={disabled || index === 0} onClick={() => onMove(-1)}>
        <span aria-hidden="true">▲</span>
      </Button>
      <Button id={`${idPrefix}-down`} size="sm" variant="ghost" aria-label={`Move ${what} down`} title="Move down" disabled={disabled || index === count - 1} onClick={() => onMove(1)}>
        <span aria-hidden="true">▼</span>
      </Button>
    </span>
  );
}

/** A copy of `ids` with the item at `index` moved one step in `dir` (unchanged at the ends). */
export function moved<T>(ids: readonly T[], index: number, dir: -1 | 1): T[] {
  const out = [...ids];
  const j = index + dir;
  if (index < 0 || index >= out.length || j < 0 || j >= out.length) return out;
  [out[index], out[j]] = [out[j], out[index]];
  return out;
}

/** After a move, keep keyboard focus on the moved item's button (or its other button at an end). */
export function refocusMove(idPrefix: string, dir: -1 | 1) {
  requestAnimationFrame(() => {
    const want = document.getElementById(`${idPrefix}-${dir === -1 ? 'up' : 'down'}`) as HTMLButtonElement | null;
    const other = document.getElementById(`${idPrefix}-${dir === -1 ? 'down' : 'up'}`) as HTMLButtonElement | null;
    (want && !want.disabled ? want : other)?.focus();
  });
}
