/** Deleting a study asks for its name typed again (DeleteStudyRequest), because it takes every field with it. */
import { useEffect, useState } from 'react';
import { DeleteStudyRequest } from '@shared/schemas/studies';
import { Button } from '@/components/Button';
import { Dialog } from '@/components/Dialog';
import { TextField } from '@/components/TextField';
import { ErrorNotice } from '@/components/Caution';
import { serverErrors, validate, type FieldErrors } from '@/lib/form';
import { useDeleteStudy } from '../api/useDeleteStudy';

export function DeleteStudyDialog({ open, onClose, studyId, studyName, onDeleted }: { open: boolean; onClose: () => void; studyId: number; studyName: string; onDeleted: () => void }) {
  const del = useDeleteStudy(studyId);
  const [confirmName, setConfirmName] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});
  useEffect(() => {
    if (open) {
      setConfirmName('');
      setErrors({});
      del.reset();
    }
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [open]);
  const shown = { ...serverErrors(del.error, ['confirmName']), ...errors };

  const submit = (e: React.FormEvent) => {
    e.preventDefault();
    const v = validate(DeleteStudyRequest, { confirmName });
    if (!v.ok) return setErrors(v.errors);
    if (confirmName !== studyName) return setErrors({ confirmName: 'the name typed differs from the study name' });
    setErrors({});
    del.mutate(v.data, { onSuccess: onDeleted });
  };

  return (
    <Dialog open={open} onClose={onClose} title="Delete this study?" alert width="sm" description={<>This removes the study, its conditions, coverslips, fields, cells and measurements. It cannot be undone.</>}>
      <form onSubmit={submit} noValidate className="flex flex-col gap-4">
        <TextField label={`Type “${studyName}” to confirm`} value={confirmName} onChange={(e) => setConfirmName(e.target.value)} error={shown.confirmName} autoComplete="off" data-autofocus />
        {shown._form && <ErrorNotice error={shown._form} />}
        <div className="flex justify-end gap-2">
          <Button onClick={onClose}>Cancel</Button>
          <Button type="submit" variant="danger" pending={del.isPending}>
            Delete study
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
