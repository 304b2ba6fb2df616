/** Labs and who belongs to each: create, rename, delete (only when no study belongs to it), add and remove members. */
import { useState } from 'react';
import { CreateLabRequest, UpdateLabRequest, type Lab, type UserRow } from '@shared/schemas/people';
import { Button } from '@/components/Button';
import { Card } from '@/components/Card';
import { ConfirmDialog } from '@/components/Dialog';
import { EmptyState } from '@/components/EmptyState';
import { ErrorNotice } from '@/components/Caution';
import { inputClass } from '@/components/TextField';
import { RoleBadges } from '@/features/auth';
import { NameDialog } from '@/features/studies';
import { useCreateLab } from '../api/useCreateLab';
import { useUpdateLab } from '../api/useUpdateLab';
import { useDeleteLab } from '../api/useDeleteLab';
import { useAddLabMember } from '../api/useAddLabMember';
import { useRemoveLabMember } from '../api/useRemoveLabMember';
import { plural } from '@shared/format/plural';

function LabCard({ lab, users, announce }: { lab: Lab; users: UserRow[]; announce: (m: string) => void }) {
  const rename = useUpdateLab();
  const del = useDeleteLab();
  const add = useAddLabMember();
  const remove = useRemoveLabMember();
  const [renaming, setRenaming] = useState(false);
  const [deleting, setDeleting] = useState(false);
  const [pick, setPick] = useState('');
  const memberIds = new Set(lab.members.map((m) => m.id));
  const candidates = users.filter((u) => !memberIds.has(u.id) && !u.disabled);
  const selectId = `lab-${lab.id}-add`;

  return (
    <Card
      title={lab.name}
      actions={
        <>
          <Button size="sm" variant="ghost" onClick={() => setRenaming(true)} aria-label={`Rename lab ${lab.name}`}>
            Rename
          </Button>
          <Button size="sm" variant="quietDanger" onClick={() => setDeleting(true)} aria-label={`Delete lab ${lab.name}`}>
            Delete
          </Button>
        </>
      }
    >
      <p className="mb-2 text-xs text-ink-soft">
        {plural(lab.studyCount, 'study', 'studies')} · {plural(lab.members.length, 'member')}
      </p>
      {(add.isError || remove.isError) && <ErrorNotice error={add.error ?? remove.error} className="mb-2" />}
      {lab.members.length === 0 ? (
        <p className="text-sm text-ink-soft">No members yet.</p>
      ) : (
        <ul className="divide-y divide-ink/5" aria-label={`Members of ${lab.name}`}>
          {lab.members.map((m) => (
            <li key={m.id} className="flex flex-wrap items-center gap-2 py-1.5 text-sm">
              <span className="font-medium">{m.name}</span>
              <RoleBadges roles={m.roles} />
              <Button
                size="sm"
                variant="ghost"
                className="ml-auto"
                aria-label={`Remove ${m.name} from ${lab.name}`}
                onClick={() => remove.mutate({ labId: lab.id, userId: m.id }, { onSuccess: () => announce(`${m.name} removed from ${lab.name}.`) })}
              >
                Remove
              </Button>
            </li>
          ))}
        </ul>
      )}
      {candidates.length > 0 && (
        <form
          className="mt-3 flex items-end gap-2"
          onSubmit={(e) => {
            e.preventDefault();
            if (!pick) return;
            const u = users.find((x) => x.id === Number(pick));
            add.mutate({ labId: lab.id, userId: Number(pick) }, { onSuccess: () => (setPick(''), announce(`${u?.name ?? 'Member'} added to ${lab.name}.`)) });
          }}
        >
          <div className="flex-1">
            <label htmlFor={selectId} className="mb-1 block text-xs font-medium text-ink-soft">
              Add a member
            </label>
            <select id={selectId} className={inputClass()} value={pick} onChange={(e) => setPick(e.target.value)}>
              <option value="">Choose a person…</option>
              {candidates.map((u) => (
                <option key={u.id} value={u.id}>
                  {u.name} ({u.email})
                </option>
              ))}
            </select>
          </div>
          <Button type="submit" size="md" disabled={!pick} pending={add.isPending}>
            Add
          </Button>
        </form>
      )}
      <NameDialog open={renaming} onClose={() => setRenaming(false)} title="Rename lab" label="Lab name" initial={lab.name} submitLabel="Rename" schema={UpdateLabRequest} save={(b) => rename.mutateAsync({ id: lab.id, ...b })} />
      <ConfirmDialog
        open={deleting}
        onClose={() => setDeleting(false)}
        title={`Delete lab “${lab.name}”?`}
        message={lab.studyCount > 0 ? 'Studies still belong to this lab, so the server will refuse; move or delete them first.' : 'Its members keep their accounts.'}
        confirmLabel="Delete lab"
        onConfirm={() => del.mutateAsync(lab.id).then(() => announce(`Lab ${lab.name} deleted.`))}
      />
    </Card>
  );
}

export function LabsPanel({ labs, users, announce }: { labs: Lab[]; users: UserRow[]; announce: (m: string) => void }) {
  const create = useCreateLab();
  const [creating, setCreating] = useState(false);
  return (
    <section aria-labelledby="labs-heading">
      <div className="mb-3 flex items-center justify-between">
        <h2 id="labs-heading">Labs</h2>
        <Button onClick={() => setCreating(true)}>New lab</Button>
      </div>
      {labs.length === 0 ? (
        <EmptyState title="No labs yet">A lab owns studies; its members see them.</EmptyState>
      ) : (
        <div className="grid gap-4 md:grid-cols-2">
          {labs.map((l) => (
            <LabCard key={l.id} lab={l} users={users} announce={announce} />
          ))}
        </div>
      )}
      <NameDialog open={creating} onClose={() => setCreating(false)} title="New lab" label="Lab name" submitLabel="Create lab" schema={CreateLabRequest} save={(b) => create.mutateAsync(b).then((lab) => announce(`Lab ${lab.name} created.`))} />
    </section>
  );
}
