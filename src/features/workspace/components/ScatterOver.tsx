/**
 * On a stack: whether the Pixel scatter and the live coefficients cover every slice (3D, voxel by voxel, as
 * runs measure a stack by default) or the slice shown, with the slices loaded so far while a volume arrives,
 * and the size limit stated when a stack is too large to hold in the browser (lib/volumePreview.ts).
 */
import { useId } from 'react';
import type { FieldDetail } from '@shared/schemas/fields';
import { VOLUME_PREVIEW_MAX_BYTES, megabytes, volumeBytes, volumeFits } from '../lib/volumePreview';

export function ScatterOver({ field, over, onOver, progress }: { field: FieldDetail; over: 'volume' | 'slice'; onOver: (o: 'volume' | 'slice') => void; progress: { done: number; total: number } | null }) {
  const name = useId();
  const fits = volumeFits(field);
  const bytes = volumeBytes(field);
  return (
    <div className="mb-2 space-y-1 text-sm">
      <fieldset className="flex flex-wrap gap-x-4 gap-y-1">
        <legend className="sr-only">Pixels the scatter covers</legend>
        <label className="flex items-center gap-1.5">
          <input type="radio" name={name} checked={over === 'volume'} disabled={!fits} onChange={() => onOver('volume')} />
          Every slice (3D)
        </label>
        <label className="flex items-center gap-1.5">
          <input type="radio" name={name} checked={over === 'slice'} onChange={() => onOver('slice')} />
          The slice shown
        </label>
      </fieldset>
      {!fits ? (
        <p className="text-xs text-ink-soft" data-testid="volume-limit">
          This stack is {megabytes(bytes)}; the browser holds at most {megabytes(VOLUME_PREVIEW_MAX_BYTES)} for the preview, so it covers the slice shown. Runs measure every slice.
        </p>
      ) : (
        over === 'volume' &&
        progress &&
        progress.done < progress.total && (
          <div className="flex items-center gap-2 text-xs text-ink-soft" data-testid="volume-progress">
            <progress className="h-2 w-32" value={progress.done} max={progress.total} aria-label="Slices loaded for the scatter" />
            <span aria-live="polite">
              Loading slice {progress.done + 1} of {progress.total} ({megabytes(bytes)} in all)…
            </span>
          </div>
        )
      )}
    </div>
  );
}
