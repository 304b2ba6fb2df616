/** Approve, return (with a note saying what to change) or retire a calibration version: facility managers only, as recipes are reviewed. */
import { useState } from 'react';
import { Button, ErrorNotice, TextArea } from '@/components';
import type { CalibrationDetail } from '@shared/schemas/instruments';
import { useCalibrationTransition } from '../api/useCalibrationTransition';

export function CalibrationReviewActions({ calibration: c }: { calibration: CalibrationDetail }) {
  const [note, setNote] = useState('');
  const t = useCalibrationTransition();
  const can = (a: CalibrationDetail['allowed'][number]) => c.allowed.includes(a);
  if (!can('approve') && !can('return') && !can('retire')) return null;
  const pending = (a: string) => t.isPending && t.variables?.action === a;
  return (
    <div className="space-y-3">
      {(can('approve') || can('return')) && (
        <TextArea label="Note to the proposer" hint="Required when you return the calibration; kept in its history." value={note} onChange={(e) => setNote(e.target.value)} rows={3} />
      )}
      <div className="flex flex-wrap gap-2">
        {can('approve') && (
          <Button variant="primary" pending={pending('approve')} onClick={() => t.mutate({ id: c.id, action: 'approve', note: note || undefined }, { onSuccess: () => setNote('') })}>
            Approve v{c.version}
          </Button>
        )}
        {can('return') && (
          <Button disabled={!note.trim()} pending={pending('return')} onClick={() => t.mutate({ id: c.id, action: 'return', note }, { onSuccess: () => setNote('') })}>
            Return with note
          </Button>
        )}
        {can('retire') && (
          <Button variant="quietDanger" pending={pending('retire')} onClick={() => t.mutate({ id: c.id, action: 'retire' })}>
            Retire
          </Button>
        )}
      </div>
      <ErrorNotice error={t.error} />
    </div>
  );
}
