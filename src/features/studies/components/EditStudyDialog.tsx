/** Rename a study, change its description or the instrument its uploads default to (UpdateStudyRequest). */
import { useEffect, useState } from 'react';
import { UpdateStudyRequest, type StudyDetail } from '@shared/schemas/studies';
import { Button } from '@/components/Button';
import { Dialog } from '@/components/Dialog';
import { TextArea, TextField } from '@/components/TextField';
import { ErrorNotice } from '@/components/Caution';
import { serverErrors, validate, type FieldErrors } from '@/lib/form';
import { InstrumentPicker } from '@/features/instruments';
import { useUpdateStudy } from '../api/useUpdateStudy';

export function EditStudyDialog({ open, onClose, study }: { open: boolean; onClose: () => void; study: StudyDetail }) {
  const update = useUpdateStudy(study.id);
  const [name, setName] = useState(study.name);
  const [description, setDescription] = useState(study.description);
  const [instrumentId, setInstrumentId] = useState<number | null>(study.defaultInstrument?.id ?? null);
  const [errors, setErrors] = useState<FieldErrors>({});
  useEffect(() => {
    if (open) {
      setName(study.name);
      setDescription(study.description);
      setInstrumentId(study.defaultInstrument?.id ?? null);
      setErrors({});
      update.reset();
    }
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [open]);
  const shown = { ...serverErrors(update.error, ['name', 'description']), ...errors };

  const submit = (e: React.FormEvent) => {
    e.preventDefault();
    const v = validate(UpdateStudyRequest, { name, description, defaultInstrumentId: instrumentId });
    if (!v.ok) return setErrors(v.errors);
    setErrors({});
    update.mutate(v.data, { onSuccess: onClose });
  };

  return (
    <Dialog open={open} onClose={onClose} title="Edit study">
      <form onSubmit={submit} noValidate className="flex flex-col gap-4">
        <TextField label="Study name" value={name} onChange={(e) => setName(e.target.value)} error={shown.name} data-autofocus />
        <TextArea label="Description" rows={4} value={description} onChange={(e) => setDescription(e.target.value)} error={shown.description} />
        <InstrumentPicker label="Instrument new uploads are recorded on" value={instrumentId} onChange={setInstrumentId} />
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
