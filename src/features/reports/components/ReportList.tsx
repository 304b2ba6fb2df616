/** The study's reports, newest first. */
import { Link } from 'react-router';
import { EmptyState, ErrorNotice, Loading } from '@/components';
import { COEFFICIENTS } from '@shared/coefficients';
import { useReports } from '../api/useReports';
import { ProvisionalBadge } from '@/features/recipes';
import { formatDateTime } from '@shared/format/datetime';
import { plural } from '@shared/format/plural';

export function ReportList({ studyId, emptyAction }: { studyId: number; emptyAction?: React.ReactNode }) {
  const q = useReports(studyId);
  if (q.isPending) return <Loading />;
  if (q.isError) return <ErrorNotice error={q.error} />;
  if (!q.data.length)
    return (
      <EmptyState title="No reports yet" action={emptyAction}>
        A report freezes the study's comparison, with a methods paragraph, so it can be read and shared.
      </EmptyState>
    );
  return (
    <ul className="divide-y divide-ink/10 rounded-lg border border-ink/10 bg-white">
      {q.data.map((r) => (
        <li key={r.id} className="flex flex-wrap items-center justify-between gap-3 px-4 py-3">
          <div className="min-w-0">
            <Link to={`/reports/${r.id}`} className="font-medium text-accent-dark hover:underline">
              {r.title}
            </Link>
            <p className="text-xs text-ink-soft">
              {formatDateTime(r.createdAt)}
              {r.createdBy && ` · ${r.createdBy}`} · {plural(r.cells, 'cell')} · {r.coefficients.map((k) => (COEFFICIENTS.find((c) => c.key === k)?.label ?? k)).join(', ')}
            </p>
          </div>
          {r.anyProvisional && <ProvisionalBadge />}
        </li>
      ))}
    </ul>
  );
}
