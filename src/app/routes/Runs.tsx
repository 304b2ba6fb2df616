/** Route module: Runs — progress of every run the user may see (polling while active); start one for a study (?studyId=). */
import { useSearchParams } from 'react-router';
import { Card, PageHeader } from '@/components';
import { RunList } from '@/features/runs/components/RunList';
import { RunDetailPanel } from '@/features/runs/components/RunDetailPanel';
import { StartRunForm } from '@/features/runs/components/StartRunForm';

export function Component() {
  const [params, setParams] = useSearchParams();
  const studyId = Number(params.get('studyId')) || undefined;
  const selected = Number(params.get('run')) || null;
  const select = (id: number) => {
    const next = new URLSearchParams(params);
    next.set('run', String(id));
    setParams(next);
  };
  return (
    <div className="space-y-4">
      <PageHeader title="Runs" description="A run applies one recipe version to fields and measures every cell. Runs continue on the server while you do other things." />
      {studyId && (
        <Card title="Start a run">
          <StartRunForm studyId={studyId} onStarted={select} />
        </Card>
      )}
      {selected && (
        <Card>
          <RunDetailPanel id={selected} />
        </Card>
      )}
      <Card>
        <RunList studyId={studyId} selected={selected} onSelect={select} />
      </Card>
    </div>
  );
}
