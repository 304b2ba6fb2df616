/**
 * Display controls: which view (both channels or one), shown intensities per channel, z slice. These change the
 * picture only — never the numbers — and the panel says so.
 */
import { useEffect, useId, useState } from 'react';
import type { FieldDetail } from '@shared/schemas/fields';
import { NumberText, readNumberText } from '@shared/schemas/common';
import { cx } from '@/components';
import type { DisplaySettings } from './Viewer';

export function DisplayPanel({ field, display, onChange, autoRanges }: { field: FieldDetail; display: DisplaySettings; onChange: (d: DisplaySettings) => void; autoRanges: [number, number][] | null }) {
  const names = channelNames(field);
  const top = field.sampleFormat === 'float' ? Math.max(field.facts.ch1.max, field.facts.ch2.max, 1) : 2 ** field.bitDepth - 1;
  return (
    <div className="space-y-3 text-sm">
      <div role="radiogroup" aria-label="View" className="inline-flex rounded-md border border-ink/15 bg-white p-0.5">
        {(['composite', 'ch1', 'ch2'] as const).map((v) => (
          <button
            key={v}
            type="button"
            role="radio"
            aria-checked={display.view === v}
            onClick={() => onChange({ ...display, view: v })}
            className={cx('rounded px-2.5 py-1 text-xs font-medium', display.view === v ? 'bg-accent text-white' : 'text-ink-soft hover:bg-ink/5')}
          >
            {v === 'composite' ? 'Both' : v === 'ch1' ? names[0] : names[1]}
          </button>
        ))}
      </div>
      {(['range1', 'range2'] as const).map((k, i) => (
        <RangeControl
          key={k}
          label={names[i]}
          tone={i === 0 ? 'text-ch1-ink' : 'text-ch2-ink'}
          top={top}
          dataRange={i === 0 ? [field.facts.ch1.min, field.facts.ch1.max] : [field.facts.ch2.min, field.facts.ch2.max]}
          value={display[k] ?? autoRanges?.[i] ?? null}
          auto={display[k] === null}
          onChange={(r) => onChange({ ...display, [k]: r })}
        />
      ))}
      {field.sizeZ > 1 && (
        <label className="flex items-center gap-2">
          <span className="w-16 text-ink-soft">Z slice</span>
          <select
            className="rounded border border-ink/20 bg-white px-1.5 py-1 text-sm"
            value={display.z === undefined ? String(Math.floor((field.sizeZ - 1) / 2)) : String(display.z)}
            onChange={(e) => onChange({ ...display, z: e.target.value === 'mip' ? 'mip' : Number(e.target.value) })}
          >
            {Array.from({ length: field.sizeZ }, (_, z) => (
              <option key={z} value={z}>
                {z + 1} of {field.sizeZ}
              </option>
            ))}
            <option value="mip">Brightest of all slices (projection)</option>
          </select>
        </label>
      )}
      <p className="text-xs text-ink-soft" data-testid="display-note">
        Shown intensities and the view change the picture only. Coefficients always use the raw pixel values{field.sizeZ > 1 ? ' of the chosen slice' : ''}.
      </p>
    </div>
  );
}

export function channelNames(field: FieldDetail): [string, string] {
  return [field.channelNames[0] || 'Channel 1', field.channelNames[1] || 'Channel 2'];
}

/**
 * One channel's shown intensities: sliders and two boxes. Typed bounds are checked (shared NumberText) against
 * the channel's data range from the field facts, the maximum above the minimum; a refused text stays in its
 * box with a message beside it and the picture keeps the last valid range.
 */
export function RangeControl({ label, tone, top, dataRange, value, auto, onChange }: { label: string; tone: string; top: number; dataRange: [number, number]; value: [number, number] | null; auto: boolean; onChange: (r: [number, number] | null) => void }) {
  const [lo, setLo] = useState(value ? fmt(value[0]) : '');
  const [hi, setHi] = useState(value ? fmt(value[1]) : '');
  const [error, setError] = useState<{ box: 'lo' | 'hi'; message: string } | null>(null);
  useEffect(() => {
    if (value) (setLo(fmt(value[0])), setHi(fmt(value[1])), setError(null));
  }, [value?.[0], value?.[1]]); // eslint-disable-line react-hooks/exhaustive-deps
  const errorId = useId();
  const [dataMin, dataMaxRaw] = dataRange;
  // a constant channel (min = max) still needs room for a range whose maximum is above its minimum
  const dataMax = dataMaxRaw > dataMin ? dataMaxRaw : dataMin + 1;
  const commit = (a: string, b: string) => {
    // a box still showing the current bound keeps its exact value (the box shows it rounded)
    const x = value && a === fmt(value[0]) ? { value: value[0], error: null } : readNumberText(NumberText(`${label} minimum`, { min: dataMin, max: dataMax, maxExclusive: true }), a);
    if (x.error !== null) return setError({ box: 'lo', message: x.error });
    const y = value && b === fmt(value[1]) && value[1] > x.value ? { value: value[1], error: null } : readNumberText(NumberText(`${label} maximum`, { min: x.value, minExclusive: true, max: dataMax }), b);
    if (y.error !== null) return setError({ box: 'hi', message: y.error });
    setError(null);
    if (!value || x.value !== value[0] || y.value !== value[1]) onChange([x.value, y.value]);
  };
  const untouched = () => (value ? lo === fmt(value[0]) && hi === fmt(value[1]) : lo === '' && hi === '');
  const commitBoxes = () => (untouched() ? setError(null) : commit(lo, hi));
  const step = top > 1000 ? 1 : top / 1000;
  const boundBox = (which: 'lo' | 'hi', bound: 'minimum' | 'maximum', text: string, setText: (t: string) => void) => (
    <input
      aria-label={`${label} display ${bound} value`}
      aria-invalid={error?.box === which}
      aria-describedby={error?.box === which ? errorId : undefined}
      inputMode="decimal"
      className="w-20 rounded border border-ink/20 px-1.5 py-0.5 font-mono aria-[invalid=true]:border-danger"
      value={text}
      onChange={(e) => setText(e.target.value)}
      onBlur={commitBoxes}
      onKeyDown={(e) => e.key === 'Enter' && commitBoxes()}
    />
  );
  return (
    <fieldset className="space-y-1">
      <legend className={cx('flex w-full items-center justify-between text-xs font-medium', tone)}>
        <span>{label}: shown intensities</span>
        {!auto && (
          <button type="button" className="text-ink-soft underline-offset-2 hover:underline" onClick={() => onChange(null)}>
            automatic
          </button>
        )}
      </legend>
      <div className="flex items-center gap-2">
        <input type="range" aria-label={`${label} display minimum`} min={dataMin} max={dataMax} step={step} value={Number(lo) || dataMin} onChange={(e) => (setLo(e.target.value), commit(e.target.value, hi))} className="w-full accent-[#0f766e]" />
        <input type="range" aria-label={`${label} display maximum`} min={dataMin} max={dataMax} step={step} value={Number(hi) || dataMax} onChange={(e) => (setHi(e.target.value), commit(lo, e.target.value))} className="w-full accent-[#0f766e]" />
      </div>
      <div className="flex items-center gap-2 text-xs">
        {boundBox('lo', 'minimum', lo, setLo)}
        <span className="text-ink-faint">to</span>
        {boundBox('hi', 'maximum', hi, setHi)}
        {auto && <span className="text-ink-faint">(automatic)</span>}
      </div>
      {error && (
        <p id={errorId} role="alert" className="text-xs text-danger">
          {error.message}
        </p>
      )}
    </fieldset>
  );
}

const fmt = (v: number) => (Number.isInteger(v) ? String(v) : v.toPrecision(4));
