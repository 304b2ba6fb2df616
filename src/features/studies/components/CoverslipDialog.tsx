/** Add or edit a coverslip: name, replicate number, date prepared, notes (Create/UpdateCoverslipRequest). */
import { useEffect, useState } from 'react';
import { CreateCoverslipRequest, UpdateCoverslipRequest, type Coverslip } from '@shared/schemas/studies';
import { Button } from '@/components/Button';
import { Dialog } from '@/components/Dialog';
import { TextArea, TextField } from '@/components/TextField';
import { ErrorNotice } from '@/components/Caution';
import { serverErrors, validate, type FieldErrors } from '@/lib/form';
import { NumberTextFor, readNumberText } from '@shared/schemas/common';

/** The replicate box refuses what the coverslip requests refuse (a positive whole number), quoting the text. */
const REPLICATE = NumberTextFor('Replicate', CreateCoverslipRequest.shape.replicate.unwrap());

export type CoverslipValues = { name?: string; replicate?: number; preparedOn?: string | null; notes?: string };

const FIELDS = ['name', 'replicate', 'preparedOn', 'notes'];

export function CoverslipDialog({
  open,
  onClose,
  coverslip,
  conditionName,
  save,
}: {
  open: boolean;
  onClose: () => void;
  /** absent: a new coverslip */
  coverslip?: Coverslip;
  conditionName: string;
  save: (body: CoverslipValues) => Promise<unknown>;
}) {
  const [name, setName] = useState('');
  const [replicate, setReplicate] = useState('');
  const [preparedOn, setPreparedOn] = useState('');
  const [notes, setNotes] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});
  const [pending, setPending] = useState(false);

  useEffect(() => {
    if (!open) return;
    setName(coverslip?.name ?? '');
    setReplicate(coverslip ? String(coverslip.replicate) : '');
    setPreparedOn(coverslip?.preparedOn ?? '');
    setNotes(coverslip?.notes ?? '');
    setErrors({});
  }, [open, coverslip]);

  const submit = async (e: React.FormEvent) => {
    e.preventDefault();
    const rep = replicate.trim() === '' ? null : readNumberText(REPLICATE, replicate);
    if (rep?.error) return setErrors({ replicate: rep.error });
    const values = {
      name: name.trim() === '' && !coverslip ? undefined : name,
      replicate: rep?.value ?? undefined,
      preparedOn: preparedOn === '' ? null : preparedOn,
      notes,
    };
    const v = coverslip ? validate(UpdateCoverslipRequest, values) : validate(CreateCoverslipRequest, values);
    if (!v.ok) return setErrors(v.errors);
    setPending(true);
    try {
      await save(v.data);
      onClose();
    } catch (err) {
      setErrors(serverErrors(err, FIELDS));
    } finally {
      setPending(false);
    }
  };

  return (
    <Dialog open={open} onClose={onClose} title={coverslip ? `Edit ${coverslip.name}` : `Add a coverslip to ${conditionName}`}>
      <form onSubmit={submit} noValidate className="flex flex-col gap-4">
        <div className="grid gap-4 sm:grid-cols-[1fr_8rem]">
          <TextField label="Name" value={name} onChange={(e) => setName(e.target.value)} error={errors.name} hint={coverslip ? undefined : 'Leave empty for an automatic name.'} data-autofocus />
          <TextField
            label="Replicate"
            inputMode="numeric"
            value={replicate}
            onChange={(e) => setReplicate(e.target.value)}
            error={errors.replicate}
            hint={coverslip ? undefined : 'Next free if empty.'}
          />
        </div>
        <TextField label="Prepared on" type="date" value={preparedOn} onChange={(e) => setPreparedOn(e.target.value)} error={errors.preparedOn} />
        <TextArea label="Notes" rows={3} value={notes} onChange={(e) => setNotes(e.target.value)} error={errors.notes} />
        {errors._form && <ErrorNotice error={errors._form} />}
        <div className="flex justify-end gap-2">
          <Button onClick={onClose}>Cancel</Button>
          <Button type="submit" variant="primary" pending={pending}>
            {coverslip ? 'Save' : 'Add coverslip'}
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
