/** Ends the session and goes to sign-in. */
import { useNavigate } from 'react-router';
import { Button } from '@/components/Button';
import { useSignOut } from '../api/useSignOut';

export function SignOutButton() {
  const signOut = useSignOut();
  const navigate = useNavigate();
  return (
    <Button
      variant="secondary"
      size="sm"
      className="mt-2 w-full"
      pending={signOut.isPending}
      onClick={() => signOut.mutate(undefined, { onSettled: () => navigate('/signin', { replace: true }) })}
    >
      Sign out
    </Button>
  );
}
