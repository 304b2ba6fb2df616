/**
 * Adding a field to a chosen study from elsewhere (the calibration screen's bead field): pick one of the study's
 * coverslips, then upload with the usual dialog (the fields feature's), recorded on the given instrument. Only
 * for people who may add fields to the study (`edit_images`); otherwise it says so.
 */
import { useId, useState } from 'react';
import type { FieldSummary } from '@shared/schemas/fields';
import { ErrorNotice, cx, inputClass } from '@/components';
import { UploadFields } from '@/features/fields';
import { useStudy } from '../api/useStudy';

export function UploadToStudy({ studyId, instrumentId, label, onUploaded }: { studyId: number; instrumentId: number | null; label: string; onUploaded: (fields: FieldSummary[]) => void }) {
  const study = useStudy(studyId);
  const [chosen, setChosen] = useState<number | null>(null);
  const id = useId();
  if (study.isPending) return null;
  if (study.isError) return <ErrorNotice error={study.error} />;
  const s = study.data;
  if (!s.permissions.includes('edit_images')) return <p className="text-xs text-ink-soft">You may not add fields to {s.name}; to upload a new one here, choose a study you may add fields to.</p>;
  const slips = s.conditions.flatMap((c) => c.coverslips.map((cs) => ({ id: cs.id, name: `${c.name} · ${cs.name}` })));
  if (!slips.length) return <p className="text-xs text-ink-soft">{s.name} has no coverslips yet; add one on the study page to upload a field to it.</p>;
  const coverslipId = chosen !== null && slips.some((cs) => cs.id === chosen) ? chosen : slips[0].id;
  return (
    <div className="flex flex-wrap items-end gap-2" data-slot="upload-to-study">
      <div className="flex flex-col gap-1">
        <label htmlFor={id} className="text-sm font-medium">
          Coverslip for a new field
        </label>
        <select id={id} className={cx(inputClass(false), 'w-auto')} value={coverslipId} onChange={(e) => setChosen(Number(e.target.value))}>
          {slips.map((cs) => (
            <option key={cs.id} value={cs.id}>
              {cs.name}
            </option>
          ))}
        </select>
      </div>
      <UploadFields key={coverslipId} coverslipId={coverslipId} defaultInstrumentId={instrumentId} label={label} onUploaded={onUploaded} />
    </div>
  );
}
