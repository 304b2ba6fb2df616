/** Route module: Cell table — review every cell of a study, exclude with reasons, export. */
import { useParams } from 'react-router';
import { PageHeader, Loading, ErrorNotice, ButtonLink } from '@/components';
import { useStudy } from '@/features/studies';
import { CellTableView } from '@/features/cell-table';
import { ApiError } from '@/lib/api';
import { Component as NotFound } from './NotFound';

export function Component() {
  const studyId = Number(useParams().studyId);
  const study = useStudy(studyId);
  // an id that is not a positive integer never loads (the query stays disabled): show the not-found page
  if (!Number.isInteger(studyId) || studyId <= 0) return <NotFound />;
  if (study.isError && study.error instanceof ApiError && study.error.status === 404) return <NotFound />;
  return (
    <div>
      <PageHeader
        title="Cell table"
        trail={[
          { to: '/studies', label: 'Studies' },
          { to: `/studies/${studyId}`, label: study.data?.name ?? 'Study' },
        ]}
        description="Every cell with its latest measurement. Excluded cells stay listed, with the reason, and are left out of comparisons."
        actions={<ButtonLink to={`/studies/${studyId}/compare`}>Compare conditions</ButtonLink>}
      />
      {study.isPending ? <Loading /> : study.isError ? <ErrorNotice error={study.error} /> : <CellTableView study={study.data} />}
    </div>
  );
}
