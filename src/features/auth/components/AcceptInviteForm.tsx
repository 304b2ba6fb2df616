/** Choose a password for an invited account (AcceptInvitationRequest: the server's own rule). */
import { useState } from 'react';
import { AcceptInvitationRequest } from '@shared/schemas/auth';
import { Button } from '@/components/Button';
import { TextField } from '@/components/TextField';
import { ErrorNotice } from '@/components/Caution';
import { serverErrors, validate, type FieldErrors } from '@/lib/form';
import { useAcceptInvitation } from '../api/useAcceptInvitation';

export function AcceptInviteForm({ token, email, onAccepted }: { token: string; email: string; onAccepted: () => void }) {
  const accept = useAcceptInvitation(token);
  const [password, setPassword] = useState('');
  const [repeat, setRepeat] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});
  const shown = { ...serverErrors(accept.error, ['password']), ...errors };

  const submit = (e: React.FormEvent) => {
    e.preventDefault();
    const v = validate(AcceptInvitationRequest, { password });
    const next: FieldErrors = v.ok ? {} : { ...v.errors };
    if (v.ok && password !== repeat) next.repeat = 'the two passwords differ';
    setErrors(next);
    if (!v.ok || Object.keys(next).length > 0) return accept.reset();
    accept.mutate(v.data, { onSuccess: onAccepted });
  };

  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-4" aria-label="Set your password">
      {/* for password managers: the account the password belongs to */}
      <input type="hidden" name="username" autoComplete="username" value={email} readOnly />
      <TextField label="New password" type="password" autoComplete="new-password" value={password} onChange={(e) => setPassword(e.target.value)} error={shown.password} hint="At least 10 characters." autoFocus />
      <TextField label="Repeat the password" type="password" autoComplete="new-password" value={repeat} onChange={(e) => setRepeat(e.target.value)} error={shown.repeat} />
      {shown._form && <ErrorNotice error={shown._form} />}
      <Button type="submit" variant="primary" pending={accept.isPending}>
        Set password and sign in
      </Button>
    </form>
  );
}
