/**
 * A field's µm per pixel in the workspace header: shown when known, "no pixel size" otherwise; people who may
 * edit the field's images set or correct it here (µm settings of recipes and the scale bar then use it).
 */
import { useState } from 'react';
import { Button, cx, inputClass } from '@/components';
import { PixelSizeUm } from '@shared/schemas/fields';
import { useSetPixelSize } from '../api/useSetPixelSize';

export function PixelSizeEditor({ fieldId, pixelSizeUm, canEdit }: { fieldId: number; pixelSizeUm: number | null; canEdit: boolean }) {
  const set = useSetPixelSize(fieldId);
  const [editing, setEditing] = useState(false);
  const [text, setText] = useState('');
  const [problem, setProblem] = useState<string | null>(null);
  if (!editing)
    return (
      <span className="inline-flex items-center gap-1" data-testid="pixel-size">
        {pixelSizeUm ? `${pixelSizeUm} µm/px` : 'no pixel size'}
        {canEdit && (
          <Button
            variant="ghost"
            size="sm"
            onClick={() => {
              setText(pixelSizeUm ? String(pixelSizeUm) : '');
              setProblem(null);
              set.reset();
              setEditing(true);
            }}
          >
            {pixelSizeUm ? 'Change' : 'Set pixel size'}
          </Button>
        )}
      </span>
    );
  const save = () => {
    const parsed = PixelSizeUm.safeParse(text.trim() === '' ? NaN : Number(text));
    if (!parsed.success) return setProblem(text.trim() === '' ? 'give the µm per pixel' : (parsed.error.issues[0]?.message ?? `"${text}" is not a pixel size`));
    setProblem(null);
    set.mutate({ pixelSizeUm: parsed.data }, { onSuccess: () => setEditing(false) });
  };
  // spans only: the header shows this inside its description paragraph
  return (
    <span role="group" aria-label="Pixel size" className="inline-flex flex-wrap items-center gap-2">
      <label className="inline-flex items-center gap-1">
        <span>µm per pixel</span>
        <input
          className={cx(inputClass(!!problem), 'w-24 py-0.5')}
          inputMode="decimal"
          value={text}
          onChange={(e) => setText(e.target.value)}
          onKeyDown={(e) => {
            if (e.key === 'Enter') (e.preventDefault(), save());
            if (e.key === 'Escape') setEditing(false);
          }}
          aria-invalid={!!problem || undefined}
          autoFocus
        />
      </label>
      <Button size="sm" variant="primary" pending={set.isPending} onClick={save}>
        Save
      </Button>
      <Button size="sm" onClick={() => setEditing(false)}>
        Cancel
      </Button>
      {(problem || set.error) && (
        <span role="alert" className="text-danger">
          {problem ?? (set.error instanceof Error ? set.error.message : String(set.error))}
        </span>
      )}
    </span>
  );
}
