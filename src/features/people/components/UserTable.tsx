/** Everyone with an account: roles, status, labs; edit, disable/enable, re-send an invitation. */
import { useState } from 'react';
import type { Lab, UserRow } from '@shared/schemas/people';
import { Badge } from '@/components/Badge';
import { Button } from '@/components/Button';
import { ConfirmDialog } from '@/components/Dialog';
import { ErrorNotice } from '@/components/Caution';
import { RoleBadges } from '@/features/auth';
import { useUpdateUser } from '../api/useUpdateUser';
import { useResendInvite } from '../api/useResendInvite';
import { EditUserDialog } from './EditUserDialog';

const STATUS_TONE = { active: 'accent', invited: 'warn', disabled: 'danger' } as const;

export function UserTable({ users, labs, meId, announce }: { users: UserRow[]; labs: Lab[]; meId: number; announce: (m: string) => void }) {
  const update = useUpdateUser();
  const resend = useResendInvite();
  const [editing, setEditing] = useState<UserRow | null>(null);
  const [disabling, setDisabling] = useState<UserRow | null>(null);
  const labName = new Map(labs.map((l) => [l.id, l.name]));

  return (
    <>
      {(update.isError || resend.isError) && <ErrorNotice error={update.error ?? resend.error} className="mb-3" />}
      <div className="overflow-x-auto rounded-lg border border-ink/10 bg-white">
        <table className="w-full text-left text-sm">
          <caption className="sr-only">People</caption>
          <thead className="border-b border-ink/10 text-sm text-ink-soft">
            <tr>
              <th scope="col" className="px-4 py-2 font-medium">Person</th>
              <th scope="col" className="px-4 py-2 font-medium">Roles</th>
              <th scope="col" className="px-4 py-2 font-medium">Labs</th>
              <th scope="col" className="px-4 py-2 font-medium">Status</th>
              <th scope="col" className="px-4 py-2 font-medium">
                <span className="sr-only">Actions</span>
              </th>
            </tr>
          </thead>
          <tbody>
            {users.map((u) => (
              <tr key={u.id} className="border-b border-ink/5 last:border-0 align-top">
                <th scope="row" className="px-4 py-2.5 font-normal">
                  <div className="font-medium">{u.name}</div>
                  <div className="font-mono text-xs text-ink-soft">{u.email}</div>
                </th>
                <td className="px-4 py-2.5">
                  <RoleBadges roles={u.roles} />
                </td>
                <td className="px-4 py-2.5 text-ink-soft">{u.labIds.map((id) => labName.get(id) ?? `lab ${id}`).join(', ') || '—'}</td>
                <td className="px-4 py-2.5">
                  <Badge tone={STATUS_TONE[u.status]}>{u.status}</Badge>
                </td>
                <td className="px-4 py-2.5">
                  <div className="flex flex-wrap justify-end gap-1">
                    <Button size="sm" variant="ghost" onClick={() => setEditing(u)} aria-label={`Edit ${u.name}`}>
                      Edit
                    </Button>
                    {u.status === 'invited' && (
                      <Button
                        size="sm"
                        variant="ghost"
                        aria-label={`Send ${u.name} a new invitation`}
                        pending={resend.isPending && resend.variables === u.id}
                        onClick={() => resend.mutate(u.id, { onSuccess: () => announce(`A new invitation was sent to ${u.email}.`) })}
                      >
                        Re-send invitation
                      </Button>
                    )}
                    {u.disabled ? (
                      <Button size="sm" variant="ghost" aria-label={`Enable ${u.name}`} onClick={() => update.mutate({ id: u.id, disabled: false }, { onSuccess: () => announce(`${u.name} can sign in again.`) })}>
                        Enable
                      </Button>
                    ) : (
                      u.id !== meId && (
                        <Button size="sm" variant="quietDanger" aria-label={`Disable ${u.name}`} onClick={() => setDisabling(u)}>
                          Disable
                        </Button>
                      )
                    )}
                  </div>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <EditUserDialog user={editing} onClose={() => setEditing(null)} />
      <ConfirmDialog
        open={disabling !== null}
        onClose={() => setDisabling(null)}
        title={`Disable ${disabling?.name ?? ''}?`}
        message="They are signed out at once and cannot sign in until enabled again. Their studies, fields and measurements stay."
        confirmLabel="Disable account"
        onConfirm={() => {
          const u = disabling!;
          return update.mutateAsync({ id: u.id, disabled: true }).then(() => announce(`${u.name} is disabled.`));
        }}
      />
    </>
  );
}
