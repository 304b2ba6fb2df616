/** Route module: Runs — progress of every run the user may see (polling while active); start one for a study (?studyId=).
 *  Without ?studyId, people who may run in some study pick one first; people who may not (collaborators) see no start wording. */
import { useState } from 'react';
import { useSearchParams } from 'react-router';
import { Button, Card, PageHeader, cx, inputClass } from '@/components';
import { useStudies } from '@/features/studies';
import { RunList } from '@/features/runs';
import { RunDetailPanel } from '@/features/runs';
import { StartRunForm } from '@/features/runs';
import type { StudySummary } from '@shared/schemas/studies';
import { plural } from '@shared/format/plural';

export function Component() {
  const [params, setParams] = useSearchParams();
  const studyId = Number(params.get('studyId')) || undefined;
  const selected = Number(params.get('run')) || null;
  const studies = useStudies();
  const runnable = (studies.data ?? []).filter((s) => s.permissions.includes('run'));
  const canRunHere = studyId !== undefined && runnable.some((s) => s.id === studyId);
  const select = (id: number) => {
    const next = new URLSearchParams(params);
    next.set('run', String(id));
    setParams(next);
  };
  const chooseStudy = (id: number) => {
    const next = new URLSearchParams(params);
    next.set('studyId', String(id));
    setParams(next);
  };
  return (
    <div className="space-y-4">
      <PageHeader title="Runs" description="A run applies one recipe version to fields and measures every cell. Runs continue on the server while you do other things." />
      {canRunHere && (
        <Card title="Start a run">
          <StartRunForm key={studyId} studyId={studyId!} onStarted={select} />
        </Card>
      )}
      {studyId === undefined && runnable.length > 0 && (
        <Card title="Start a run">
          <StudyPicker studies={runnable} onChoose={chooseStudy} />
        </Card>
      )}
      {selected && (
        <Card>
          <RunDetailPanel id={selected} />
        </Card>
      )}
      <Card>
        <RunList studyId={studyId} selected={selected} onSelect={select} canStart={studyId === undefined ? runnable.length > 0 : canRunHere} />
      </Card>
    </div>
  );
}

/** Choose the study to run in; the start form for it follows. */
function StudyPicker({ studies, onChoose }: { studies: StudySummary[]; onChoose: (id: number) => void }) {
  const [id, setId] = useState<number>(studies[0]!.id);
  const current = studies.some((s) => s.id === id) ? id : studies[0]!.id;
  return (
    <form
      className="flex flex-wrap items-end gap-3"
      onSubmit={(e) => {
        e.preventDefault();
        onChoose(current);
      }}
    >
      <label className="flex flex-col gap-1 text-sm">
        <span className="font-medium">Study</span>
        <select className={cx(inputClass(false), 'w-auto')} value={current} onChange={(e) => setId(Number(e.target.value))}>
          {studies.map((s) => (
            <option key={s.id} value={s.id}>
              {s.name} ({plural(s.fieldCount, 'field')})
            </option>
          ))}
        </select>
      </label>
      <Button type="submit" variant="primary">
        Choose recipe and fields
      </Button>
    </form>
  );
}
