/** Route module: sign-in. `?next=/path` says where to go afterwards (paths inside this site only). */
import { Navigate, useNavigate, useSearchParams } from 'react-router';
import { useMe } from '@/features/auth';
import { AuthFrame } from '@/features/auth';
import { SignInForm } from '@/features/auth';
import { safeNext } from '@/features/auth';
import { Loading } from '@/components/Spinner';

export function Component() {
  const [params] = useSearchParams();
  const next = safeNext(params.get('next'));
  const navigate = useNavigate();
  const me = useMe();
  if (me.isPending) return <Loading />;
  if (me.data) return <Navigate to={next} replace />;
  return (
    <AuthFrame title="Sign in">
      <SignInForm onSignedIn={() => navigate(next, { replace: true })} />
      <p className="mt-4 text-xs text-ink-soft">No account yet? Your facility manager sends an invitation by e-mail.</p>
    </AuthFrame>
  );
}
