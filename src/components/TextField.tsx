/** A labelled text input with hint and error text tied to it for assistive technology. */
import { useId, type InputHTMLAttributes, type Ref, type TextareaHTMLAttributes } from 'react';
import { cx, focusRing } from '@/lib/cx';

export const inputClass = (invalid?: boolean) =>
  cx(
    'block w-full rounded-md border bg-white px-3 py-2 text-sm text-ink placeholder:text-ink-faint',
    invalid ? 'border-danger' : 'border-ink/20 hover:border-ink/35',
    focusRing,
    'disabled:bg-ink/5 disabled:text-ink-soft',
  );

type Common = { label: string; error?: string | null; hint?: string; className?: string; hideLabel?: boolean };

export function FieldShell({ id, label, error, hint, className, hideLabel, children }: Common & { id: string; children: React.ReactNode }) {
  return (
    <div className={cx('flex flex-col gap-1', className)}>
      <label htmlFor={id} className={cx('text-sm font-medium text-ink', hideLabel && 'sr-only')}>
        {label}
      </label>
      {children}
      {hint && !error && (
        <p id={`${id}-hint`} className="text-xs text-ink-soft">
          {hint}
        </p>
      )}
      {error && (
        <p id={`${id}-error`} className="text-xs font-medium text-danger">
          {error}
        </p>
      )}
    </div>
  );
}

export function describedBy(id: string, error?: string | null, hint?: string) {
  return error ? `${id}-error` : hint ? `${id}-hint` : undefined;
}

export type TextFieldProps = Common & Omit<InputHTMLAttributes<HTMLInputElement>, 'className'> & { ref?: Ref<HTMLInputElement> };

export function TextField({ label, error, hint, className, hideLabel, id: givenId, ...input }: TextFieldProps) {
  const auto = useId();
  const id = givenId ?? auto;
  return (
    <FieldShell id={id} label={label} error={error} hint={hint} className={className} hideLabel={hideLabel}>
      <input id={id} aria-invalid={error ? true : undefined} aria-describedby={describedBy(id, error, hint)} className={inputClass(!!error)} {...input} />
    </FieldShell>
  );
}

export type TextAreaProps = Common & Omit<TextareaHTMLAttributes<HTMLTextAreaElement>, 'className'>;

export function TextArea({ label, error, hint, className, hideLabel, id: givenId, ...input }: TextAreaProps) {
  const auto = useId();
  const id = givenId ?? auto;
  return (
    <FieldShell id={id} label={label} error={error} hint={hint} className={className} hideLabel={hideLabel}>
      <textarea id={id} aria-invalid={error ? true : undefined} aria-describedby={describedBy(id, error, hint)} className={inputClass(!!error)} {...input} />
    </FieldShell>
  );
}
