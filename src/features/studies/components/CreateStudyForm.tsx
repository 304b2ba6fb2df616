/** A new study: name, optional description, and the lab when the biologist belongs to several. */
import { useState } from 'react';
import { CreateStudyRequest, type StudyDetail } from '@shared/schemas/studies';
import type { Lab } from '@shared/schemas/people';
import { Button } from '@/components/Button';
import { FieldShell, TextArea, TextField, inputClass } from '@/components/TextField';
import { ErrorNotice } from '@/components/Caution';
import { serverErrors, validate, type FieldErrors } from '@/lib/form';
import { useCreateStudy } from '../api/useCreateStudy';

export function CreateStudyForm({ labs, onCreated, onCancel }: { labs: Lab[]; onCreated: (s: StudyDetail) => void; onCancel?: () => void }) {
  const create = useCreateStudy();
  const [name, setName] = useState('');
  const [description, setDescription] = useState('');
  const [labId, setLabId] = useState<number | ''>(labs.length === 1 ? labs[0].id : '');
  const [errors, setErrors] = useState<FieldErrors>({});
  const shown = { ...serverErrors(create.error, ['name', 'description', 'labId']), ...errors };

  const submit = (e: React.FormEvent) => {
    e.preventDefault();
    const v = validate(CreateStudyRequest, { name, description: description || undefined, labId: labId === '' ? undefined : labId });
    if (!v.ok) {
      setErrors(v.errors);
      return create.reset();
    }
    if (labs.length > 1 && labId === '') {
      setErrors({ labId: 'choose the lab the study belongs to' });
      return create.reset();
    }
    setErrors({});
    create.mutate(v.data, { onSuccess: onCreated });
  };

  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-4" aria-label="New study">
      <TextField label="Study name" value={name} onChange={(e) => setName(e.target.value)} error={shown.name} data-autofocus />
      <TextArea label="Description" rows={3} value={description} onChange={(e) => setDescription(e.target.value)} error={shown.description} hint="What the study asks; optional." />
      {labs.length > 1 && (
        <FieldShell id="study-lab" label="Lab" error={shown.labId}>
          <select
            id="study-lab"
            className={inputClass(!!shown.labId)}
            value={labId}
            aria-invalid={shown.labId ? true : undefined}
            aria-describedby={shown.labId ? 'study-lab-error' : undefined}
            onChange={(e) => setLabId(e.target.value === '' ? '' : Number(e.target.value))}
          >
            <option value="">Choose a lab…</option>
            {labs.map((l) => (
              <option key={l.id} value={l.id}>
                {l.name}
              </option>
            ))}
          </select>
        </FieldShell>
      )}
      {shown._form && <ErrorNotice error={shown._form} />}
      <div className="flex justify-end gap-2">
        {onCancel && <Button onClick={onCancel}>Cancel</Button>}
        <Button type="submit" variant="primary" pending={create.isPending}>
          Create study
        </Button>
      </div>
    </form>
  );
}
