/** Password change (ChangePasswordRequest). Other sessions of the account end; this one stays signed in. */
import { useState } from 'react';
import { ChangePasswordRequest } from '@shared/schemas/auth';
import { Button } from '@/components/Button';
import { TextField } from '@/components/TextField';
import { Caution, ErrorNotice } from '@/components/Caution';
import { serverErrors, validate, type FieldErrors } from '@/lib/form';
import { useChangePassword } from '../api/useChangePassword';

export function ChangePasswordForm({ email }: { email: string }) {
  const change = useChangePassword();
  const [currentPassword, setCurrent] = useState('');
  const [newPassword, setNew] = useState('');
  const [repeat, setRepeat] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});
  const shown = { ...serverErrors(change.error, ['currentPassword', 'newPassword']), ...errors };

  const submit = (e: React.FormEvent) => {
    e.preventDefault();
    const v = validate(ChangePasswordRequest, { currentPassword, newPassword });
    const next: FieldErrors = v.ok ? {} : { ...v.errors };
    if (!next.newPassword && newPassword !== repeat) next.repeat = 'the two new passwords differ';
    setErrors(next);
    if (!v.ok || Object.keys(next).length > 0) return change.reset();
    change.mutate(v.data, {
      onSuccess: () => {
        setCurrent('');
        setNew('');
        setRepeat('');
      },
    });
  };

  return (
    <form onSubmit={submit} noValidate className="flex max-w-sm flex-col gap-4" aria-label="Change password">
      <input type="hidden" name="username" autoComplete="username" value={email} readOnly />
      <TextField label="Current password" type="password" autoComplete="current-password" value={currentPassword} onChange={(e) => setCurrent(e.target.value)} error={shown.currentPassword} />
      <TextField label="New password" type="password" autoComplete="new-password" value={newPassword} onChange={(e) => setNew(e.target.value)} error={shown.newPassword} hint="At least 10 characters." />
      <TextField label="Repeat the new password" type="password" autoComplete="new-password" value={repeat} onChange={(e) => setRepeat(e.target.value)} error={shown.repeat} />
      {shown._form && <ErrorNotice error={shown._form} />}
      {change.isSuccess && (
        <Caution tone="info">Password changed. Other browsers signed in to this account have been signed out.</Caution>
      )}
      <div>
        <Button type="submit" variant="primary" pending={change.isPending}>
          Change password
        </Button>
      </div>
    </form>
  );
}
