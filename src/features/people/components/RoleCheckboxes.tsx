/** A fieldset of role checkboxes (a person may hold several roles). */
import { useId } from 'react';
import { RoleSchema, type Role } from '@shared/schemas/auth';
import { ROLE_DUTIES, ROLE_LABELS } from '@/features/auth';
import { focusRing } from '@/lib/cx';

export function RoleCheckboxes({ value, onChange, error }: { value: Role[]; onChange: (roles: Role[]) => void; error?: string }) {
  const id = useId();
  return (
    <fieldset aria-describedby={error ? `${id}-error` : undefined} aria-invalid={error ? true : undefined}>
      <legend className="mb-1 text-sm font-medium">Roles</legend>
      <div className="flex flex-col gap-1.5">
        {RoleSchema.options.map((r) => (
          <label key={r} className="flex items-start gap-2 text-sm">
            <input
              type="checkbox"
              className={`mt-0.5 h-4 w-4 accent-accent ${focusRing}`}
              checked={value.includes(r)}
              onChange={(e) => onChange(e.target.checked ? [...value, r] : value.filter((x) => x !== r))}
            />
            <span>
              <span className="font-medium">{ROLE_LABELS[r]}</span> <span className="text-ink-soft">— {ROLE_DUTIES[r]}</span>
            </span>
          </label>
        ))}
      </div>
      {error && (
        <p id={`${id}-error`} className="mt-1 text-xs font-medium text-danger">
          {error}
        </p>
      )}
    </fieldset>
  );
}
