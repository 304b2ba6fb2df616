/**
 * One calibration version: its values with their sentences, Save and Submit while it is a draft (or returned),
 * the review actions for facility managers, and its history.
 */
import { useEffect, useState } from 'react';
import { Button, Card, Caution, ErrorNotice, Loading, TextArea } from '@/components';
import { RecipeStatusBadge } from '@/features/recipes';
import { formatDateTime } from '@shared/format/datetime';
import type { CalibrationDetail, CalibrationValues } from '@shared/schemas/instruments';
import { useCalibration } from '../api/useCalibration';
import { useCalibrationTransition } from '../api/useCalibrationTransition';
import { useUpdateCalibration } from '../api/useUpdateCalibration';
import type { ChannelNames } from '../lib/sentences';
import { CalibrationReviewActions } from './CalibrationReviewActions';
import { CalibrationValuesForm } from './CalibrationValuesForm';
import { CalibrationSourcesView, type CompositeSlot } from './CalibrationSourcesView';
import { MeasureCalibration, type UploadSlot } from './MeasureCalibration';

const valuesOf = (c: CalibrationDetail): CalibrationValues => ({ dx: c.dx, dy: c.dy, a21: c.a21, a12: c.a12 });

function Panel({ c, channels, composite, upload }: { c: CalibrationDetail; channels: ChannelNames; composite?: CompositeSlot; upload?: UploadSlot }) {
  const editable = c.allowed.includes('edit');
  const [values, setValues] = useState<CalibrationValues>(valuesOf(c));
  const [note, setNote] = useState(c.note);
  useEffect(() => {
    setValues(valuesOf(c));
    setNote(c.note);
  }, [c]);
  const update = useUpdateCalibration(c.id);
  const transition = useCalibrationTransition();
  const dirty = note !== c.note || (Object.keys(values) as (keyof CalibrationValues)[]).some((k) => values[k] !== c[k]);
  return (
    <div className="space-y-4">
      <Card
        title={`Calibration v${c.version}`}
        actions={
          <>
            <RecipeStatusBadge status={c.status} />
            {editable && (
              <Button variant="primary" disabled={!dirty} pending={update.isPending} onClick={() => update.mutate({ ...values, note })}>
                Save
              </Button>
            )}
            {c.allowed.includes('submit') && (
              <Button disabled={dirty} title={dirty ? 'Save your changes first' : undefined} pending={transition.isPending} onClick={() => transition.mutate({ id: c.id, action: 'submit' })}>
                Submit for review
              </Button>
            )}
          </>
        }
      >
        <p className="mb-3 text-sm text-ink-soft">
          Proposed by {c.proposer?.name ?? 'unknown'}
          {c.reviewer ? `; reviewed by ${c.reviewer.name}${c.reviewedAt ? ` on ${formatDateTime(c.reviewedAt)}` : ''}` : ''}.
        </p>
        {c.status === 'returned' && c.reviewNote && (
          <Caution className="mb-3" title={`Returned by ${c.reviewer?.name ?? 'a facility manager'}`}>
            {c.reviewNote}
          </Caution>
        )}
        {c.status === 'submitted' && <Caution tone="info" className="mb-3">Awaiting a facility manager's review; it cannot change until it is returned.</Caution>}
        {(c.status === 'approved' || c.status === 'retired') && (
          <Caution tone="info" className="mb-3">
            {c.status === 'approved' ? 'Approved versions never change: a change is a new version.' : 'Retired: runs no longer apply this version.'}
          </Caution>
        )}
        <CalibrationValuesForm value={values} onChange={setValues} readOnly={!editable} channels={channels} />
        <div className="mt-4">
          <TextArea label="How it was measured" hint="e.g. which bead field and control samples; kept with the version." rows={2} value={note} disabled={!editable} onChange={(e) => setNote(e.target.value)} />
        </div>
        <ErrorNotice className="mt-3" error={update.error ?? transition.error} />
      </Card>
      {editable && (
        <Card title="Measure from stored fields">
          <MeasureCalibration c={c} channels={channels} upload={upload} blocked={dirty ? 'Save or undo your changes above first: measuring replaces the values shown.' : null} />
        </Card>
      )}
      <Card title="Where the values come from">
        <CalibrationSourcesView c={c} channels={channels} composite={composite} />
      </Card>
      {(c.allowed.includes('approve') || c.allowed.includes('retire')) && (
        <Card title="Review">
          <CalibrationReviewActions calibration={c} />
        </Card>
      )}
      <Card title="History">
        <ol className="space-y-1 text-sm">
          {c.history.map((h, i) => (
            <li key={i}>
              <span className="font-mono text-xs text-ink-soft">{formatDateTime(h.at)}</span> {h.actor?.name ?? 'someone'} — {h.action}
              {h.note && <span className="text-ink-soft">: “{h.note}”</span>}
            </li>
          ))}
        </ol>
      </Card>
    </div>
  );
}

/** `composite` draws a field's composite before and after alignment (the route gives the workspace's); `upload` adds a new bead or control field to a study (the route gives the studies feature's). */
export function CalibrationPanel({ calibrationId, channels, composite, upload }: { calibrationId: number; channels: ChannelNames; composite?: CompositeSlot; upload?: UploadSlot }) {
  const q = useCalibration(calibrationId);
  if (q.isPending) return <Loading />;
  if (q.isError) return <ErrorNotice error={q.error} />;
  return <Panel c={q.data} channels={channels} composite={composite} upload={upload} />;
}
