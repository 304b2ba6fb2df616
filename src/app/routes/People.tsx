/** Route module: People & labs (facility managers): accounts with roles, invitations, disabling, labs and memberships. */
import { useCallback, useState } from 'react';
import { useMe } from '@/features/auth';
import { useUsers } from '@/features/people';
import { useLabs } from '@/features/people';
import { UserTable } from '@/features/people';
import { LabsPanel } from '@/features/people';
import { InviteUserDialog } from '@/features/people';
import { Button, ButtonLink } from '@/components/Button';
import { Caution, ErrorNotice } from '@/components/Caution';
import { PageHeader } from '@/components/PageHeader';
import { Loading } from '@/components/Spinner';
import { Component as NotFound } from './NotFound';

export function Component() {
  const me = useMe();
  const allowed = !!me.data?.roles.includes('facility_manager');
  const users = useUsers(allowed);
  const labs = useLabs(allowed);
  const [inviting, setInviting] = useState(false);
  const [message, setMessage] = useState('');
  const announce = useCallback((m: string) => setMessage(m), []);

  if (!me.data) return <Loading />;
  if (!allowed) return <NotFound />;

  return (
    <>
      <PageHeader
        title="People & labs"
        description="Accounts, their roles, and which lab each person belongs to. Lab members see the lab's studies."
        actions={
          <Button variant="primary" onClick={() => setInviting(true)} disabled={!labs.data}>
            Invite a person
          </Button>
        }
      />
      <div role="status" aria-live="polite">
        {message && (
          <Caution tone="info" className="mb-4">
            {message} {message.includes('invitation') && <ButtonLink to="/outbox" size="sm" variant="ghost">Open the Outbox</ButtonLink>}
          </Caution>
        )}
      </div>
      {users.isPending || labs.isPending ? (
        <Loading />
      ) : users.isError || labs.isError ? (
        <ErrorNotice error={users.error ?? labs.error} />
      ) : (
        <div className="flex flex-col gap-10">
          <section aria-labelledby="people-heading">
            <h2 id="people-heading" className="mb-3">
              People
            </h2>
            <UserTable users={users.data} labs={labs.data} meId={me.data.id} announce={announce} />
          </section>
          <LabsPanel labs={labs.data} users={users.data} announce={announce} />
        </div>
      )}
      <InviteUserDialog open={inviting} onClose={() => setInviting(false)} labs={labs.data ?? []} onInvited={(email) => announce(`An invitation was sent to ${email}.`)} />
    </>
  );
}
