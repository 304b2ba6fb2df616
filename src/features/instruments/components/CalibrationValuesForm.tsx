/**
 * The four values of a calibration version, each with what it means; read-only unless the version can be
 * edited. Empty = not measured (null). Boxes refuse exactly what the shared request schema refuses.
 */
import { BoxMessage, inputClass, useNumberBox } from '@/components';
import { NumberTextFor } from '@shared/schemas/common';
import { CalibrationValues } from '@shared/schemas/instruments';
import { VALUE_LABEL, bleedSentence, shiftSentence, valueMeaning, type CalibrationKey, type ChannelNames } from '../lib/sentences';

const SCHEMA = {
  dx: NumberTextFor(VALUE_LABEL.dx, CalibrationValues.shape.dx.unwrap()),
  dy: NumberTextFor(VALUE_LABEL.dy, CalibrationValues.shape.dy.unwrap()),
  a21: NumberTextFor(VALUE_LABEL.a21, CalibrationValues.shape.a21.unwrap()),
  a12: NumberTextFor(VALUE_LABEL.a12, CalibrationValues.shape.a12.unwrap()),
};

function ValueBox({ k, value, onChange, readOnly, channels }: { k: CalibrationKey; value: number | null; onChange: (n: number | null) => void; readOnly: boolean; channels: ChannelNames }) {
  const box = useNumberBox({ schema: SCHEMA[k], value, onChange, emptyIsNull: true });
  const id = `calibration-${k}`;
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-sm font-medium">
        {VALUE_LABEL[k]}
      </label>
      <input id={id} className={inputClass(!!box.error)} inputMode="decimal" placeholder="not measured" readOnly={readOnly} disabled={readOnly} {...box.input} aria-describedby={box.error ? box.messageId : `${id}-meaning`} />
      <p id={`${id}-meaning`} className="text-xs text-ink-soft">
        {valueMeaning(k, channels)}
      </p>
      <BoxMessage box={box} className="text-xs font-medium text-danger" />
    </div>
  );
}

export function CalibrationValuesForm({ value, onChange, readOnly, channels }: { value: CalibrationValues; onChange: (v: CalibrationValues) => void; readOnly: boolean; channels: ChannelNames }) {
  const set = (k: CalibrationKey) => (n: number | null) => onChange({ ...value, [k]: n });
  return (
    <div className="space-y-4">
      <fieldset className="space-y-2">
        <legend className="text-sm font-semibold">Channel shift</legend>
        <div className="grid gap-3 sm:grid-cols-2">
          <ValueBox k="dx" value={value.dx} onChange={set('dx')} readOnly={readOnly} channels={channels} />
          <ValueBox k="dy" value={value.dy} onChange={set('dy')} readOnly={readOnly} channels={channels} />
        </div>
        <p className="text-sm" data-testid="shift-sentence">
          {shiftSentence(value, channels)}
        </p>
      </fieldset>
      <fieldset className="space-y-2">
        <legend className="text-sm font-semibold">Bleed-through</legend>
        <div className="grid gap-3 sm:grid-cols-2">
          <ValueBox k="a21" value={value.a21} onChange={set('a21')} readOnly={readOnly} channels={channels} />
          <ValueBox k="a12" value={value.a12} onChange={set('a12')} readOnly={readOnly} channels={channels} />
        </div>
        <p className="text-sm" data-testid="bleed-sentence">
          {bleedSentence(value, channels)}
        </p>
      </fieldset>
    </div>
  );
}
