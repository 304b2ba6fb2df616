/** A select of the instruments (or none), with the chosen one's approved calibration named beside it. */
import { useId } from 'react';
import { cx, inputClass } from '@/components';
import { useInstruments } from '../api/useInstruments';

export function InstrumentPicker({ value, onChange, disabled, label = 'Instrument', className }: { value: number | null; onChange: (id: number | null) => void; disabled?: boolean; label?: string; className?: string }) {
  const q = useInstruments();
  const id = useId();
  const chosen = q.data?.find((i) => i.id === value);
  return (
    <div className={cx('flex flex-col gap-1', className)}>
      <label htmlFor={id} className="text-sm font-medium">
        {label}
      </label>
      <select id={id} className={cx(inputClass(false), 'w-auto')} value={value ?? ''} disabled={disabled || q.isPending} onChange={(e) => onChange(e.target.value ? Number(e.target.value) : null)} aria-describedby={`${id}-cal`}>
        <option value="">None recorded</option>
        {q.data?.map((i) => (
          <option key={i.id} value={i.id}>
            {i.name}
            {i.objective ? ` · ${i.objective}` : ''}
          </option>
        ))}
      </select>
      <p id={`${id}-cal`} className="text-xs text-ink-soft">
        {q.isError ? 'The instruments could not be loaded.' : value === null ? 'No calibration applies.' : chosen?.approved ? `Approved calibration v${chosen.approved.version} applies when a recipe asks for it.` : 'This instrument has no approved calibration yet.'}
      </p>
    </div>
  );
}
