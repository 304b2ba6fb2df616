/**
 * Measuring a draft calibration from stored fields: choose a study, then a bead field for the shift or
 * single-label control fields for a bleed-through coefficient; the server measures (off its web thread) and
 * writes the result into the draft, which stays a draft whose values can still be changed by hand.
 * A new bead or control field can be uploaded from here into a coverslip of the chosen study (the page's
 * `upload` slot: the usual upload dialog, recorded on this instrument); a new field becomes the bead field.
 */
import { useId, useState, type ReactNode } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import { Button, ErrorNotice, cx, inputClass } from '@/components';
import { plural } from '@shared/format/plural';
import type { CalibrationDetail } from '@shared/schemas/instruments';
import { useMeasureBleed, useMeasureShift } from '../api/useMeasureCalibration';
import { usePickableFields, usePickableStudies } from '../api/usePickableFields';
import type { ChannelNames } from '../lib/sentences';
import { instrumentKeys } from '../api/keys';

/** Draws the upload of a new field into the chosen study, recorded on the instrument; `onUploaded` gets the new fields' ids. */
export type UploadSlot = (studyId: number, instrumentId: number, onUploaded: (fieldIds: number[]) => void) => ReactNode;

function StudyChoice({ value, onChange }: { value: number | null; onChange: (id: number | null) => void }) {
  const studies = usePickableStudies();
  const id = useId();
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-sm font-medium">
        Study holding the fields
      </label>
      <select id={id} className={cx(inputClass(false), 'w-auto')} value={value ?? ''} disabled={studies.isPending} onChange={(e) => onChange(e.target.value ? Number(e.target.value) : null)}>
        <option value="">Choose a study…</option>
        {studies.data?.map((s) => (
          <option key={s.id} value={s.id}>
            {s.name}
          </option>
        ))}
      </select>
      <ErrorNotice error={studies.error} />
    </div>
  );
}

export function MeasureCalibration({ c, channels, blocked, upload }: { c: CalibrationDetail; channels: ChannelNames; blocked: string | null; upload?: UploadSlot }) {
  const qc = useQueryClient();
  const [studyId, setStudyId] = useState<number | null>(null);
  const fields = usePickableFields(studyId);
  const [beadField, setBeadField] = useState<number | null>(null);
  const [label, setLabel] = useState<1 | 2>(1);
  const [controls, setControls] = useState<number[]>([]);
  const shift = useMeasureShift(c.id);
  const bleed = useMeasureBleed(c.id);
  const beadId = useId();
  const busy = shift.isPending || bleed.isPending;
  const list = fields.data ?? [];
  const chooseStudy = (id: number | null) => {
    setStudyId(id);
    setBeadField(null);
    setControls([]);
  };
  // a field uploaded from here: the study's list is read again, and the first new field becomes the bead field
  const uploaded = (ids: number[]) => {
    if (studyId === null || !ids.length) return;
    void qc.invalidateQueries({ queryKey: instrumentKeys.pickFields(studyId) }).then(() => setBeadField(ids[0]));
  };
  return (
    <div className="space-y-4" data-testid="measure-calibration">
      <p className="text-sm text-ink-soft">
        The server measures the chosen fields and fills in the draft; the values stay editable until the version is submitted. A new bead or control sample can be uploaded here into a coverslip of the chosen
        study; it is recorded on this instrument and stays in that study.
      </p>
      <StudyChoice value={studyId} onChange={chooseStudy} />
      {studyId !== null && upload?.(studyId, c.instrumentId, uploaded)}
      {blocked && <p className="text-sm text-danger">{blocked}</p>}
      <ErrorNotice error={fields.error} />
      {studyId !== null && fields.isSuccess && list.length === 0 && <p className="text-sm">This study has no fields yet.</p>}
      {list.length > 0 && (
        <div className="grid gap-4 md:grid-cols-2">
          <fieldset className="space-y-2 rounded-md border border-ink/10 p-3">
            <legend className="px-1 text-sm font-semibold">Shift from a bead field</legend>
            <div className="flex flex-col gap-1">
              <label htmlFor={beadId} className="text-sm font-medium">
                Bead field
              </label>
              <select id={beadId} className={cx(inputClass(false), 'w-auto')} value={beadField ?? ''} onChange={(e) => setBeadField(e.target.value ? Number(e.target.value) : null)}>
                <option value="">Choose a field…</option>
                {list.map((f) => (
                  <option key={f.id} value={f.id}>
                    {f.name} ({f.width} × {f.height}{list.filter((g) => g.name === f.name).length > 1 ? `, id ${f.id}` : ''})
                  </option>
                ))}
              </select>
              <p className="text-xs text-ink-soft">Small beads seen by both {channels.channel1} and {channels.channel2}: how far they lie apart is the shift.</p>
            </div>
            <Button variant="primary" disabled={beadField === null || busy || !!blocked} pending={shift.isPending} onClick={() => beadField !== null && shift.mutate({ fieldId: beadField })}>
              Measure shift
            </Button>
            <ErrorNotice error={shift.error} />
          </fieldset>
          <fieldset className="space-y-2 rounded-md border border-ink/10 p-3">
            <legend className="px-1 text-sm font-semibold">Bleed-through from control fields</legend>
            <div className="flex flex-col gap-1 text-sm" role="radiogroup" aria-label="Which label the controls carry">
              <label className="flex items-center gap-2">
                <input type="radio" name={`label-${c.id}`} checked={label === 1} onChange={() => setLabel(1)} />
                Labelled for {channels.channel1} only (gives a21)
              </label>
              <label className="flex items-center gap-2">
                <input type="radio" name={`label-${c.id}`} checked={label === 2} onChange={() => setLabel(2)} />
                Labelled for {channels.channel2} only (gives a12)
              </label>
            </div>
            <div className="max-h-40 overflow-auto rounded border border-ink/10 p-2 text-sm" role="group" aria-label="Control fields">
              {list.map((f) => (
                <label key={f.id} className="flex items-center gap-2">
                  <input type="checkbox" checked={controls.includes(f.id)} onChange={(e) => setControls((cur) => (e.target.checked ? [...cur, f.id] : cur.filter((x) => x !== f.id)))} />
                  {f.name}
                  {list.filter((g) => g.name === f.name).length > 1 && <span className="text-ink-soft">(id {f.id})</span>}
                </label>
              ))}
            </div>
            <p className="text-xs text-ink-soft">
              {controls.length ? `${plural(controls.length, 'control field')} pooled; each keeps its own background.` : 'Choose one or more control fields.'}
              {c.dx !== null && c.dy !== null ? ` ${channels.channel2} is aligned with this version's shift first.` : ''}
            </p>
            <Button variant="primary" disabled={!controls.length || busy || !!blocked} pending={bleed.isPending} onClick={() => bleed.mutate({ label, fieldIds: controls })}>
              Measure bleed-through
            </Button>
            <ErrorNotice error={bleed.error} />
          </fieldset>
        </div>
      )}
    </div>
  );
}
