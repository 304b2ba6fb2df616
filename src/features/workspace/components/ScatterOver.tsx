/**
 * On a stack: whether the Pixel scatter and the live coefficients cover every slice (3D, voxel by voxel, as
 * runs measure a stack by default) or the slice shown, with the slices loaded so far while a volume arrives.
 * A stack larger than the browser holds (lib/volumePreview.ts, limit stated) is covered cell by cell: the
 * selected cell's voxels are read slice by slice, with the same progress bar.
 */
import { useId } from 'react';
import type { FieldDetail } from '@shared/schemas/fields';
import { VOLUME_PREVIEW_MAX_BYTES, WHOLE_FIELD_3D_MAX_VOXELS, megabytes, volumeBytes, volumeFits, wholeFieldIn3d } from '../lib/volumePreview';

const millions = (n: number) => `${Number((n / 1e6).toPrecision(3))} million`;

export function ScatterOver({ field, over, onOver, progress, cellChosen }: { field: FieldDetail; over: 'volume' | 'slice'; onOver: (o: 'volume' | 'slice') => void; progress: { done: number; total: number } | null; cellChosen: boolean }) {
  const name = useId();
  const fits = volumeFits(field);
  const bytes = volumeBytes(field);
  return (
    <div className="mb-2 space-y-1 text-sm">
      <fieldset className="flex flex-wrap gap-x-4 gap-y-1">
        <legend className="sr-only">Pixels the scatter covers</legend>
        <label className="flex items-center gap-1.5">
          <input type="radio" name={name} checked={over === 'volume'} onChange={() => onOver('volume')} />
          Every slice (3D)
        </label>
        <label className="flex items-center gap-1.5">
          <input type="radio" name={name} checked={over === 'slice'} onChange={() => onOver('slice')} />
          The slice shown
        </label>
      </fieldset>
      {!fits && (
        <p className="text-xs text-ink-soft" data-testid="volume-limit">
          This stack is {megabytes(bytes)}, more than the {megabytes(VOLUME_PREVIEW_MAX_BYTES)} the browser holds at once, so over every slice the preview reads the selected cell&rsquo;s voxels slice by slice
          {over === 'volume' && !cellChosen ? '; select a cell (until then the slice shown is used).' : '.'}
        </p>
      )}
      {fits && over === 'volume' && !cellChosen && !wholeFieldIn3d(field) && (
        <p className="text-xs text-ink-soft" data-testid="volume-whole-field">
          The whole field has {millions(field.width * field.height * field.sizeZ)} voxels, more than the {millions(WHOLE_FIELD_3D_MAX_VOXELS)} previewed at once: without a selected cell the scatter covers the slice shown; a selected cell covers every slice.
        </p>
      )}
      {over === 'volume' && progress && progress.done < progress.total && (
        <div className="flex items-center gap-2 text-xs text-ink-soft" data-testid="volume-progress">
          <progress className="h-2 w-32" value={progress.done} max={progress.total} aria-label="Slices read for the scatter" />
          <span aria-live="polite">
            Reading slice {progress.done + 1} of {progress.total}…
          </span>
        </div>
      )}
    </div>
  );
}
