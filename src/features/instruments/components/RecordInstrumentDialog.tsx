/** Record a new instrument: its name, objective and channel pair (facility managers). */
import { useState } from 'react';
import { ErrorNotice, FormDialog, TextField } from '@/components';
import type { ApiError } from '@/lib/api';
import type { InstrumentDetail } from '@shared/schemas/instruments';
import { useCreateInstrument } from '../api/useCreateInstrument';

export function RecordInstrumentDialog({ open, onClose, onDone }: { open: boolean; onClose: () => void; onDone: (i: InstrumentDetail) => void }) {
  const create = useCreateInstrument();
  const [v, setV] = useState({ name: '', objective: '', channel1: '', channel2: '' });
  const set = (k: keyof typeof v) => (e: React.ChangeEvent<HTMLInputElement>) => setV((cur) => ({ ...cur, [k]: e.target.value }));
  const err = (p: string) => (create.error as ApiError | null)?.fieldError?.(p);
  return (
    <FormDialog
      open={open}
      onClose={onClose}
      title="Record an instrument"
      description="Fields recorded on it can then use its approved calibration: the shift between its two channels and their bleed-through."
      submitLabel="Record instrument"
      pending={create.isPending}
      noValidate
      onSubmit={(e) => {
        e.preventDefault();
        create.mutate(v, {
          onSuccess: (i) => {
            setV({ name: '', objective: '', channel1: '', channel2: '' });
            onDone(i);
          },
        });
      }}
    >
      <TextField label="Name" required value={v.name} onChange={set('name')} error={err('name')} hint="How people in the facility call it, e.g. the room and the stand." />
      <TextField label="Objective" value={v.objective} onChange={set('objective')} error={err('objective')} hint="e.g. 63× / 1.4 oil" />
      <TextField label="Channel 1" required value={v.channel1} onChange={set('channel1')} error={err('channel1')} hint="The dye or laser line recorded as channel 1" />
      <TextField label="Channel 2" required value={v.channel2} onChange={set('channel2')} error={err('channel2')} hint="The dye or laser line recorded as channel 2" />
      <ErrorNotice error={create.error} />
    </FormDialog>
  );
}
