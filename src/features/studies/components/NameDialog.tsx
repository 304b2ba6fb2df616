/**
 * A dialog with one name field, validated with a shared schema (`{ name }`), for adding or renaming a
 * condition (and the study's name). `save` returns a promise; its server errors land beside the field.
 */
import { useEffect, useState } from 'react';
import type { ZodType } from 'zod';
import { Button } from '@/components/Button';
import { Dialog } from '@/components/Dialog';
import { TextField } from '@/components/TextField';
import { ErrorNotice } from '@/components/Caution';
import { serverErrors, validate, type FieldErrors } from '@/lib/form';

export type NameDialogProps = {
  open: boolean;
  onClose: () => void;
  title: string;
  label: string;
  initial?: string;
  submitLabel: string;
  schema: ZodType<{ name: string }>;
  save: (body: { name: string }) => Promise<unknown>;
};

export function NameDialog({ open, onClose, title, label, initial = '', submitLabel, schema, save }: NameDialogProps) {
  const [name, setName] = useState(initial);
  const [errors, setErrors] = useState<FieldErrors>({});
  const [pending, setPending] = useState(false);
  useEffect(() => {
    if (open) {
      setName(initial);
      setErrors({});
    }
  }, [open, initial]);

  const submit = async (e: React.FormEvent) => {
    e.preventDefault();
    const v = validate(schema, { name });
    if (!v.ok) return setErrors(v.errors);
    setPending(true);
    try {
      await save(v.data);
      onClose();
    } catch (err) {
      setErrors(serverErrors(err, ['name']));
    } finally {
      setPending(false);
    }
  };

  return (
    <Dialog open={open} onClose={onClose} title={title} width="sm">
      <form onSubmit={submit} noValidate className="flex flex-col gap-4">
        <TextField label={label} value={name} onChange={(e) => setName(e.target.value)} error={errors.name} data-autofocus />
        {errors._form && <ErrorNotice error={errors._form} />}
        <div className="flex justify-end gap-2">
          <Button onClick={onClose}>Cancel</Button>
          <Button type="submit" variant="primary" pending={pending}>
            {submitLabel}
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
