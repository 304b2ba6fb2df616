/** Invite a person by e-mail (InviteUserRequest); the invitation link arrives in their mailbox (and the Outbox). */
import { useEffect, useState } from 'react';
import type { Role } from '@shared/schemas/auth';
import { InviteUserRequest, type Lab } from '@shared/schemas/people';
import { Button } from '@/components/Button';
import { Dialog } from '@/components/Dialog';
import { TextField } from '@/components/TextField';
import { ErrorNotice } from '@/components/Caution';
import { focusRing } from '@/lib/cx';
import { serverErrors, validate, type FieldErrors } from '@/lib/form';
import { useInviteUser } from '../api/useInviteUser';
import { RoleCheckboxes } from './RoleCheckboxes';

export function InviteUserDialog({ open, onClose, labs, onInvited }: { open: boolean; onClose: () => void; labs: Lab[]; onInvited?: (email: string) => void }) {
  const invite = useInviteUser();
  const [email, setEmail] = useState('');
  const [name, setName] = useState('');
  const [roles, setRoles] = useState<Role[]>([]);
  const [labIds, setLabIds] = useState<number[]>([]);
  const [errors, setErrors] = useState<FieldErrors>({});
  useEffect(() => {
    if (!open) return;
    setEmail('');
    setName('');
    setRoles([]);
    setLabIds(labs.length === 1 ? [labs[0].id] : []);
    setErrors({});
    invite.reset();
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [open]);
  const shown = { ...serverErrors(invite.error, ['email', 'name', 'roles', 'labIds']), ...errors };

  const submit = (e: React.FormEvent) => {
    e.preventDefault();
    const v = validate(InviteUserRequest, { email, name, roles, labIds });
    if (!v.ok) return setErrors(v.errors);
    setErrors({});
    invite.mutate(v.data, {
      onSuccess: (res) => {
        onInvited?.(res.user.email);
        onClose();
      },
    });
  };

  return (
    <Dialog open={open} onClose={onClose} title="Invite a person" description="They receive an e-mail with a link to set their password. The link works once.">
      <form onSubmit={submit} noValidate className="flex flex-col gap-4">
        <TextField label="E-mail" type="email" value={email} onChange={(e) => setEmail(e.target.value)} error={shown.email} data-autofocus />
        <TextField label="Name" value={name} onChange={(e) => setName(e.target.value)} error={shown.name} />
        <RoleCheckboxes value={roles} onChange={setRoles} error={shown.roles} />
        {labs.length > 0 && (
          <fieldset>
            <legend className="mb-1 text-sm font-medium">Labs</legend>
            <div className="flex flex-wrap gap-x-4 gap-y-1.5">
              {labs.map((l) => (
                <label key={l.id} className="flex items-center gap-2 text-sm">
                  <input
                    type="checkbox"
                    className={`h-4 w-4 accent-accent ${focusRing}`}
                    checked={labIds.includes(l.id)}
                    onChange={(e) => setLabIds(e.target.checked ? [...labIds, l.id] : labIds.filter((x) => x !== l.id))}
                  />
                  {l.name}
                </label>
              ))}
            </div>
            {shown.labIds && <p className="mt-1 text-xs font-medium text-danger">{shown.labIds}</p>}
          </fieldset>
        )}
        {shown._form && <ErrorNotice error={shown._form} />}
        <div className="flex justify-end gap-2">
          <Button onClick={onClose}>Cancel</Button>
          <Button type="submit" variant="primary" pending={invite.isPending}>
            Send invitation
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
