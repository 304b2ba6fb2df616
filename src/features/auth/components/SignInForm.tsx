/** E-mail and password, checked with the server's LoginRequest schema before sending. */
import { useState } from 'react';
import { LoginRequest } from '@shared/schemas/auth';
import { Button } from '@/components/Button';
import { TextField } from '@/components/TextField';
import { ErrorNotice } from '@/components/Caution';
import { serverErrors, validate, type FieldErrors } from '@/lib/form';
import { useSignIn } from '../api/useSignIn';

export function SignInForm({ onSignedIn }: { onSignedIn: () => void }) {
  const signIn = useSignIn();
  const [email, setEmail] = useState('');
  const [password, setPassword] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});
  const shown = { ...serverErrors(signIn.error, ['email', 'password']), ...errors };

  const submit = (e: React.FormEvent) => {
    e.preventDefault();
    const v = validate(LoginRequest, { email, password });
    if (!v.ok) {
      setErrors(v.errors);
      signIn.reset();
      return;
    }
    setErrors({});
    signIn.mutate(v.data, { onSuccess: onSignedIn });
  };

  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-4" aria-label="Sign in">
      <TextField label="E-mail" type="email" name="email" autoComplete="username" value={email} onChange={(e) => setEmail(e.target.value)} error={shown.email} autoFocus />
      <TextField label="Password" type="password" name="password" autoComplete="current-password" value={password} onChange={(e) => setPassword(e.target.value)} error={shown.password} />
      {shown._form && <ErrorNotice error={shown._form} />}
      <Button type="submit" variant="primary" pending={signIn.isPending}>
        Sign in
      </Button>
    </form>
  );
}
