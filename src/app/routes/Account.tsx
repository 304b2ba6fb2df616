/** Route module: Account: who you are here, your password, your e-mail notices and your API tokens. */
import { useMe } from '@/features/auth';
import { ChangePasswordForm } from '@/features/auth';
import { ROLE_DUTIES, RoleBadges } from '@/features/auth';
import { ApiTokensSection } from '@/features/tokens';
import { NotificationsSection } from '@/features/notifications';
import { Card } from '@/components/Card';
import { PageHeader } from '@/components/PageHeader';
import { Loading } from '@/components/Spinner';

export function Component() {
  const me = useMe();
  if (!me.data) return <Loading />;
  const u = me.data;
  return (
    <>
      <PageHeader title="Account" description="Your name and roles are set by your facility manager." />
      <div className="grid max-w-4xl gap-4 lg:grid-cols-2">
        <Card title="You">
          <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-2 text-sm">
            <dt className="text-ink-soft">Name</dt>
            <dd className="font-medium">{u.name}</dd>
            <dt className="text-ink-soft">E-mail</dt>
            <dd className="font-mono text-xs leading-5">{u.email}</dd>
            <dt className="text-ink-soft">Roles</dt>
            <dd>
              <RoleBadges roles={u.roles} />
            </dd>
          </dl>
          <ul className="mt-4 list-disc pl-5 text-xs text-ink-soft">
            {u.roles.map((r) => (
              <li key={r}>{ROLE_DUTIES[r]}</li>
            ))}
          </ul>
        </Card>
        <Card title="Password">
          <ChangePasswordForm email={u.email} />
        </Card>
        <Card title="E-mail notices" className="lg:col-span-2">
          <NotificationsSection />
        </Card>
        <Card title="API tokens" className="lg:col-span-2">
          <ApiTokensSection />
        </Card>
      </div>
    </>
  );
}
