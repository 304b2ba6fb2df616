/**
 * Route module: one instrument (/instruments/:instrumentId): its calibration versions, newest first, and the
 * chosen one (?calibration=<id>, else the newest) with its values, life cycle and history. A new version starts
 * from the latest one's values; while a draft (or returned version) is open, the page offers it instead.
 */
import { useParams, useSearchParams } from 'react-router';
import { Button, Card, ErrorNotice, Loading, PageHeader } from '@/components';
import { useMe } from '@/features/auth';
import { CalibrationPanel, CalibrationVersions, useCreateCalibration, useInstrument, type CompositeSlot, type UploadSlot } from '@/features/instruments';
import { UploadToStudy } from '@/features/studies';
import { FieldComposite } from '@/features/workspace';
import { ApiError } from '@/lib/api';
import { Component as NotFound } from './NotFound';

const trail = [{ to: '/instruments', label: 'Instruments' }];
const composite: CompositeSlot = (fieldId, shift) => <FieldComposite key={fieldId} fieldId={fieldId} shift={shift} title="Bead field before and after alignment" />;
const upload: UploadSlot = (studyId, instrumentId, onUploaded) => <UploadToStudy key={studyId} studyId={studyId} instrumentId={instrumentId} label="Upload a bead or control field…" onUploaded={(f) => onUploaded(f.map((x) => x.id))} />;

export function Component() {
  const me = useMe();
  const instrumentId = Number(useParams().instrumentId);
  const q = useInstrument(instrumentId);
  const create = useCreateCalibration(instrumentId);
  const [params, setParams] = useSearchParams();
  if (!me.data) return <Loading />;
  if (!me.data.roles.includes('facility_manager')) return <NotFound />;
  if (q.isPending) return <Loading />;
  if (q.isError) return q.error instanceof ApiError && q.error.status === 404 ? <NotFound /> : <ErrorNotice error={q.error} />;
  const i = q.data;
  const asked = Number(params.get('calibration'));
  const selected = i.calibrations.find((c) => c.id === asked)?.id ?? i.calibrations[0]?.id ?? null;
  const select = (id: number) => setParams({ calibration: String(id) }, { replace: true });
  const openDraft = i.calibrations.find((c) => c.status === 'draft' || c.status === 'returned');
  return (
    <div className="space-y-4">
      <PageHeader
        trail={trail}
        title={i.name}
        description={
          <>
            {i.objective ? `${i.objective} · ` : ''}channel 1 <span className="ch1-ink">{i.channel1}</span>, channel 2 <span className="ch2-ink">{i.channel2}</span> ·{' '}
            {i.approved ? `runs apply calibration v${i.approved.version}` : 'no approved calibration yet'}
          </>
        }
        actions={
          openDraft ? (
            openDraft.id !== selected && <Button onClick={() => select(openDraft.id)}>Open draft v{openDraft.version}</Button>
          ) : (
            <Button variant="primary" pending={create.isPending} onClick={() => create.mutate({}, { onSuccess: (c) => select(c.id) })}>
              New calibration version
            </Button>
          )
        }
      />
      <ErrorNotice error={create.error} />
      <div className="grid gap-4 lg:grid-cols-[16rem_minmax(0,1fr)]">
        <Card title="Versions">
          <CalibrationVersions versions={i.calibrations} selected={selected} onSelect={select} />
        </Card>
        {selected !== null && <CalibrationPanel key={selected} calibrationId={selected} channels={i} composite={composite} upload={upload} />}
      </div>
    </div>
  );
}
