/**
 * Display controls: which view (both channels or one), display range per channel, z slice. These change the
 * picture only — never the numbers — and the panel says so.
 */
import { useEffect, useState } from 'react';
import type { FieldDetail } from '@shared/schemas/fields';
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
          tone={i === 0 ? 'text-ch1' : 'text-ch2'}
          top={top}
          dataMax={i === 0 ? field.facts.ch1.max : field.facts.ch2.max}
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
        Display range and view change the picture only. Coefficients always use the raw pixel values{field.sizeZ > 1 ? ' of the chosen slice' : ''}.
      </p>
    </div>
  );
}

export function channelNames(field: FieldDetail): [string, string] {
  return [field.channelNames[0] || 'Channel 1', field.channelNames[1] || 'Channel 2'];
}

function RangeControl({ label, tone, top, dataMax, value, auto, onChange }: { label: string; tone: string; top: number; dataMax: number; value: [number, number] | null; auto: boolean; onChange: (r: [number, number] | null) => void }) {
  const [lo, setLo] = useState(value ? String(value[0]) : '');
  const [hi, setHi] = useState(value ? String(value[1]) : '');
  useEffect(() => {
    if (value) (setLo(fmt(value[0])), setHi(fmt(value[1])));
  }, [value?.[0], value?.[1]]); // eslint-disable-line react-hooks/exhaustive-deps
  const max = Math.max(dataMax, 1);
  const commit = (a: string, b: string) => {
    const x = Number(a), y = Number(b);
    if (Number.isFinite(x) && Number.isFinite(y) && y > x) onChange([x, y]);
  };
  const step = top > 1000 ? 1 : top / 1000;
  return (
    <fieldset className="space-y-1">
      <legend className={cx('flex w-full items-center justify-between text-xs font-medium', tone)}>
        <span>{label} display range</span>
        {!auto && (
          <button type="button" className="text-ink-soft underline-offset-2 hover:underline" onClick={() => onChange(null)}>
            automatic
          </button>
        )}
      </legend>
      <div className="flex items-center gap-2">
        <input type="range" aria-label={`${label} display minimum`} min={0} max={max} step={step} value={Number(lo) || 0} onChange={(e) => (setLo(e.target.value), commit(e.target.value, hi))} className="w-full accent-[#0f766e]" />
        <input type="range" aria-label={`${label} display maximum`} min={0} max={max} step={step} value={Number(hi) || max} onChange={(e) => (setHi(e.target.value), commit(lo, e.target.value))} className="w-full accent-[#0f766e]" />
      </div>
      <div className="flex items-center gap-2 text-xs">
        <input aria-label={`${label} display minimum value`} className="w-20 rounded border border-ink/20 px-1.5 py-0.5 font-mono" value={lo} onChange={(e) => setLo(e.target.value)} onBlur={() => commit(lo, hi)} onKeyDown={(e) => e.key === 'Enter' && commit(lo, hi)} />
        <span className="text-ink-faint">to</span>
        <input aria-label={`${label} display maximum value`} className="w-20 rounded border border-ink/20 px-1.5 py-0.5 font-mono" value={hi} onChange={(e) => setHi(e.target.value)} onBlur={() => commit(lo, hi)} onKeyDown={(e) => e.key === 'Enter' && commit(lo, hi)} />
        {auto && <span className="text-ink-faint">(automatic)</span>}
      </div>
    </fieldset>
  );
}

const fmt = (v: number) => (Number.isInteger(v) ? String(v) : v.toPrecision(4));
