/** Asks for the reason before a cell is left out of comparisons; the reason is required and audited. */
import { useEffect, useState } from 'react';
import { Button, Dialog, ErrorNotice, TextArea } from '@/components';
import { ApiError } from '@/lib/api';

export function ExcludeDialog({ cellName, open, onClose, onSubmit }: { cellName: string; open: boolean; onClose: () => void; onSubmit: (reason: string) => Promise<unknown> }) {
  const [reason, setReason] = useState('');
  const [error, setError] = useState<unknown>(null);
  const [touched, setTouched] = useState(false);
  const [pending, setPending] = useState(false);
  useEffect(() => {
    if (open) {
      setReason('');
      setError(null);
      setTouched(false);
    }
  }, [open]);
  const tooShort = reason.trim().length < 3;
  const submit = async (e?: React.FormEvent) => {
    e?.preventDefault();
    setTouched(true);
    if (tooShort) return;
    setPending(true);
    setError(null);
    try {
      await onSubmit(reason.trim());
      onClose();
    } catch (err) {
      setError(err);
    } finally {
      setPending(false);
    }
  };
  const fieldError = (touched && tooShort ? 'give a reason of at least 3 characters' : null) ?? (error instanceof ApiError ? error.fieldError('reason') : undefined);
  return (
    <Dialog
      open={open}
      onClose={onClose}
      title={`Exclude ${cellName}`}
      description="Excluded cells stay in the Cell table, marked, and are left out of comparisons and reports. The reason is recorded with your name; you can undo it."
      footer={
        <>
          <Button onClick={onClose}>Cancel</Button>
          <Button variant="primary" onClick={() => void submit()} pending={pending}>
            Exclude cell
          </Button>
        </>
      }
    >
      <form onSubmit={submit}>
        <TextArea label="Reason" rows={3} value={reason} onChange={(e) => setReason(e.target.value)} error={fieldError} hint="for example: two nuclei in one outline; out of focus; mitotic" data-autofocus maxLength={500} />
      </form>
      <ErrorNotice error={error instanceof ApiError && error.fieldError('reason') ? null : error} className="mt-3" />
    </Dialog>
  );
}
