/** Route module: /invite/:token: an invited person sets a password and is signed in. */
import { Link, useNavigate, useParams } from 'react-router';
import { ApiError } from '@/lib/api';
import { useInvitation } from '@/features/auth';
import { AuthFrame } from '@/features/auth';
import { AcceptInviteForm } from '@/features/auth';
import { RoleBadges } from '@/features/auth';
import { Loading } from '@/components/Spinner';
import { ErrorNotice } from '@/components/Caution';

export function Component() {
  const { token = '' } = useParams();
  const invitation = useInvitation(token);
  const navigate = useNavigate();

  if (invitation.isPending) return <Loading label="Checking the invitation…" />;
  if (invitation.isError) {
    const status = invitation.error instanceof ApiError ? invitation.error.status : 0;
    const message =
      status === 410
        ? 'This invitation was already used or has expired. Ask your facility manager to send a new one.'
        : status === 404
          ? 'This invitation link is not known. Check that the whole link was copied, or ask for a new one.'
          : invitation.error.message;
    return (
      <AuthFrame title="Invitation">
        <ErrorNotice error={message} />
        <p className="mt-4 text-sm">
          <Link to="/signin" className="text-accent-dark underline">
            Go to sign-in
          </Link>
        </p>
      </AuthFrame>
    );
  }
  const inv = invitation.data;
  return (
    <AuthFrame title={`Welcome, ${inv.name}`}>
      <dl className="mb-4 grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 text-sm">
        <dt className="text-ink-soft">Account</dt>
        <dd className="font-mono text-xs leading-5">{inv.email}</dd>
        <dt className="text-ink-soft">Roles</dt>
        <dd>
          <RoleBadges roles={inv.roles} />
        </dd>
      </dl>
      <AcceptInviteForm token={token} email={inv.email} onAccepted={() => navigate('/', { replace: true })} />
    </AuthFrame>
  );
}
