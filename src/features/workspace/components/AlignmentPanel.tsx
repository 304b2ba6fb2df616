/**
 * The workspace's channel alignment: which shift to look at (the approved calibration of the field's
 * instrument, or the shift measured on this field itself when asked), the cross-correlation curves of the
 * field, and the composite with alignment on or off (drawn in the pixel worker with the runs' resampling).
 * Looking never changes a stored number; runs apply the approved calibration when their recipe asks for it.
 */
import { useEffect, useState } from 'react';
import { Button, ErrorNotice, Loading } from '@/components';
import { useMe } from '@/features/auth';
import { CrossCorrelationChart, useFieldShift, useInstruments } from '@/features/instruments';
import { formatFixed } from '@shared/format/number';
import type { FieldDetail } from '@shared/schemas/fields';
import { AlignmentComposite, type CompositeDrawer } from './AlignmentComposite';

type Source = 'approved' | 'measured';

/** `onMainImage` receives the shift the main image should be aligned by (null: as recorded). */
export function AlignmentPanel({ field, drawer, onMainImage, mainImageComposite }: { field: FieldDetail; drawer: CompositeDrawer; onMainImage?: (shift: { dx: number; dy: number } | null) => void; mainImageComposite?: boolean }) {
  const [measure, setMeasure] = useState(false);
  const measured = useFieldShift(field.id, measure);
  // collaborators may not read instruments: the approved shift is then simply not offered
  const me = useMe();
  const instruments = useInstruments(!!me.data?.roles.some((r) => r !== 'collaborator'));
  const instrument = field.instrumentId === null ? undefined : instruments.data?.find((i) => i.id === field.instrumentId);
  const approved = instrument?.approved && instrument.approved.dx !== null && instrument.approved.dy !== null ? { dx: instrument.approved.dx, dy: instrument.approved.dy, version: instrument.approved.version } : null;
  const [chosen, setChosen] = useState<Source | null>(null);
  const source: Source | null = chosen ?? (approved ? 'approved' : measured.data ? 'measured' : null);
  const shift = source === 'approved' && approved ? approved : source === 'measured' && measured.data ? { dx: measured.data.dx, dy: measured.data.dy } : null;
  const [main, setMain] = useState(false);
  useEffect(() => {
    onMainImage?.(main && shift ? { dx: shift.dx, dy: shift.dy } : null);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [main, shift?.dx, shift?.dy]);
  return (
    <div className="space-y-3" data-testid="alignment-panel">
      <div className="space-y-1 text-sm" role="radiogroup" aria-label="Shift to align by">
        {approved ? (
          <label className="flex items-start gap-2">
            <input type="radio" name="alignment-source" checked={source === 'approved'} onChange={() => setChosen('approved')} />
            <span>
              {instrument!.name}, approved calibration v{approved.version}: ({formatFixed(approved.dx, 2)}, {formatFixed(approved.dy, 2)}) px
            </span>
          </label>
        ) : (
          <p className="text-ink-soft">{field.instrumentId === null ? 'No instrument is given for this field, so no calibration applies.' : instrument ? `${instrument.name} has no approved shift yet.` : 'The instrument\u2019s calibration is not shown to you.'}</p>
        )}
        {measured.data && (
          <label className="flex items-start gap-2">
            <input type="radio" name="alignment-source" checked={source === 'measured'} onChange={() => setChosen('measured')} />
            <span data-testid="field-shift">
              Measured on this field: ({formatFixed(measured.data.dx, 2)}, {formatFixed(measured.data.dy, 2)}) px ({measured.data.z})
            </span>
          </label>
        )}
      </div>
      {!measured.data && (
        <Button onClick={() => setMeasure(true)} pending={measured.isFetching} disabled={measured.isFetching}>
          Measure this field&apos;s shift
        </Button>
      )}
      <ErrorNotice error={measured.error} />
      {measured.isFetching && <Loading label="Measuring the shift…" />}
      {measured.data && <CrossCorrelationChart curves={measured.data.curves} dx={measured.data.dx} dy={measured.data.dy} />}
      <AlignmentComposite drawer={drawer} shift={shift} />
      {onMainImage && (
        <label className="flex items-start gap-2 text-sm">
          <input type="checkbox" checked={main && !!shift} disabled={!shift} onChange={(e) => setMain(e.target.checked)} />
          <span>
            Align channel 2 in the main image too
            {main && shift && !mainImageComposite ? <span className="block text-xs text-ink-soft">Shown when the view is Both channels.</span> : null}
          </span>
        </label>
      )}
    </div>
  );
}
