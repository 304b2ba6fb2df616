/** Change a person's name and roles (UpdateUserRequest). */
import { useEffect, useState } from 'react';
import type { Role } from '@shared/schemas/auth';
import { UpdateUserRequest, type UserRow } from '@shared/schemas/people';
import { Button } from '@/components/Button';
import { Dialog } from '@/components/Dialog';
import { TextField } from '@/components/TextField';
import { ErrorNotice } from '@/components/Caution';
import { serverErrors, validate, type FieldErrors } from '@/lib/form';
import { useUpdateUser } from '../api/useUpdateUser';
import { RoleCheckboxes } from './RoleCheckboxes';

export function EditUserDialog({ user, onClose }: { user: UserRow | null; onClose: () => void }) {
  const update = useUpdateUser();
  const [name, setName] = useState('');
  const [roles, setRoles] = useState<Role[]>([]);
  const [errors, setErrors] = useState<FieldErrors>({});
  useEffect(() => {
    if (!user) return;
    setName(user.name);
    setRoles(user.roles);
    setErrors({});
    update.reset();
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [user]);
  const shown = { ...serverErrors(update.error, ['name', 'roles']), ...errors };

  const submit = (e: React.FormEvent) => {
    e.preventDefault();
    const v = validate(UpdateUserRequest, { name, roles });
    if (!v.ok || !user) return setErrors(v.ok ? {} : v.errors);
    setErrors({});
    update.mutate({ id: user.id, ...v.data }, { onSuccess: onClose });
  };

  return (
    <Dialog open={user !== null} onClose={onClose} title={`Edit ${user?.name ?? ''}`}>
      <form onSubmit={submit} noValidate className="flex flex-col gap-4">
        <TextField label="Name" value={name} onChange={(e) => setName(e.target.value)} error={shown.name} data-autofocus />
        <RoleCheckboxes value={roles} onChange={setRoles} error={shown.roles} />
        {shown._form && <ErrorNotice error={shown._form} />}
        <div className="flex justify-end gap-2">
          <Button onClick={onClose}>Cancel</Button>
          <Button type="submit" variant="primary" pending={update.isPending}>
            Save
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
