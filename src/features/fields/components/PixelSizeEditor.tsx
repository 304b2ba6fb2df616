/**
 * A field's voxel size in the workspace header: the µm per pixel and, for stacks, the µm between z slices,
 * each shown when known ("no pixel size", "no z step" otherwise); people who may edit the field's images set or
 * correct them here (µm settings of recipes, 3D block depths, the scale bar and the methods paragraph use them).
 */
import { useState } from 'react';
import type { z } from 'zod';
import { Button, cx, inputClass } from '@/components';
import { PixelSizeUm, ZStepUm } from '@shared/schemas/fields';
import { useSetPixelSize } from '../api/useSetPixelSize';
import { useSetZStep } from '../api/useSetZStep';

export function PixelSizeEditor({ fieldId, pixelSizeUm, canEdit }: { fieldId: number; pixelSizeUm: number | null; canEdit: boolean }) {
  const set = useSetPixelSize(fieldId);
  return (
    <ScaleValueEditor
      testId="pixel-size"
      value={pixelSizeUm}
      shown={(v) => `${um(v)} µm/px`}
      unknown="no pixel size"
      setLabel="Set pixel size"
      group="Pixel size"
      boxLabel="µm per pixel"
      schema={PixelSizeUm}
      mutation={{ pending: set.isPending, error: set.error, reset: set.reset, save: (v, done) => set.mutate({ pixelSizeUm: v }, { onSuccess: done }) }}
      canEdit={canEdit}
    />
  );
}

/** The µm between slices of a stack (shown only for fields with more than one slice). */
export function ZStepEditor({ fieldId, zStepUm, canEdit }: { fieldId: number; zStepUm: number | null; canEdit: boolean }) {
  const set = useSetZStep(fieldId);
  return (
    <ScaleValueEditor
      testId="z-step"
      value={zStepUm}
      shown={(v) => `${um(v)} µm between slices`}
      unknown="no z step"
      setLabel="Set z step"
      group="Z step"
      boxLabel="µm between slices"
      schema={ZStepUm}
      mutation={{ pending: set.isPending, error: set.error, reset: set.reset, save: (v, done) => set.mutate({ zStepUm: v }, { onSuccess: done }) }}
      canEdit={canEdit}
    />
  );
}

/** µm for people: at most four significant digits (a z step read from nm can carry float noise). */
export const um = (v: number) => (Number.isInteger(v) ? String(v) : String(Number(v.toPrecision(4))));

interface ScaleValueProps {
  testId: string;
  value: number | null;
  shown: (v: number) => string;
  unknown: string;
  setLabel: string;
  group: string;
  boxLabel: string;
  schema: z.ZodType<number>;
  mutation: { pending: boolean; error: unknown; reset: () => void; save: (v: number, done: () => void) => void };
  canEdit: boolean;
}

function ScaleValueEditor({ testId, value, shown, unknown, setLabel, group, boxLabel, schema, mutation, canEdit }: ScaleValueProps) {
  const [editing, setEditing] = useState(false);
  const [text, setText] = useState('');
  const [problem, setProblem] = useState<string | null>(null);
  if (!editing)
    return (
      <span className="inline-flex items-center gap-1" data-testid={testId}>
        {value ? shown(value) : unknown}
        {canEdit && (
          <Button
            variant="ghost"
            size="sm"
            onClick={() => {
              setText(value ? um(value) : '');
              setProblem(null);
              mutation.reset();
              setEditing(true);
            }}
          >
            {value ? `Change ${group.toLowerCase()}` : setLabel}
          </Button>
        )}
      </span>
    );
  const save = () => {
    const parsed = schema.safeParse(text.trim() === '' ? NaN : Number(text));
    if (!parsed.success) return setProblem(text.trim() === '' ? `give the ${boxLabel}` : (parsed.error.issues[0]?.message ?? `"${text}" is not a ${group.toLowerCase()}`));
    setProblem(null);
    mutation.save(parsed.data, () => setEditing(false));
  };
  const err = mutation.error;
  // spans only: the header shows this inside its description paragraph
  return (
    <span role="group" aria-label={group} className="inline-flex flex-wrap items-center gap-2">
      <label className="inline-flex items-center gap-1">
        <span>{boxLabel}</span>
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
      <Button size="sm" variant="primary" pending={mutation.pending} onClick={save}>
        Save
      </Button>
      <Button size="sm" onClick={() => setEditing(false)}>
        Cancel
      </Button>
      {(problem || err != null) && (
        <span role="alert" className="text-danger">
          {problem ?? (err instanceof Error ? err.message : String(err))}
        </span>
      )}
    </span>
  );
}
