/** Route module: a study's reports, and a new one. */
import { useParams } from 'react-router';
import { PageHeader } from '@/components';
import { useStudy } from '@/features/studies';
import { ReportList } from '@/features/reports';
import { CreateReportButton } from '@/features/reports';

export function Component() {
  const studyId = Number(useParams().studyId);
  const study = useStudy(studyId);
  const canReport = !!study.data?.permissions.includes('report');
  return (
    <div className="max-w-4xl">
      <PageHeader
        title="Reports"
        trail={[
          { to: '/studies', label: 'Studies' },
          { to: `/studies/${studyId}`, label: study.data?.name ?? 'Study' },
        ]}
        description="Frozen snapshots of this study's comparison, with figures, tables and a methods paragraph. Later runs and exclusions do not change them."
        actions={canReport && <CreateReportButton studyId={studyId} />}
      />
      <ReportList studyId={studyId} emptyAction={canReport && <CreateReportButton studyId={studyId} label="Make the first report" />} />
    </div>
  );
}
