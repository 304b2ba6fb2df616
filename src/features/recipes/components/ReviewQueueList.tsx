/** Versions waiting for a facility manager's decision (the Review queue page and the manager's home page). */
import { Link } from 'react-router';
import { EmptyState, ErrorNotice, Loading, cx, focusRing } from '@/components';
import { useRecipes } from '../api/useRecipes';
import { formatDateTime } from '@shared/format/datetime';

/** `reviewer`: the viewer is a facility manager (wording addresses them); otherwise the list is read-only information. */
export function ReviewQueueList({ compact = false, reviewer = true }: { compact?: boolean; reviewer?: boolean }) {
  const q = useRecipes(['submitted']);
  if (q.isPending) return <Loading />;
  if (q.error) return <ErrorNotice error={q.error} />;
  if (!q.data.length)
    return reviewer ? (
      <EmptyState title="Nothing to review">Submitted recipes appear here until you approve or return them.</EmptyState>
    ) : (
      <EmptyState title="Nothing waiting for review">Submitted recipes wait here for a facility manager to approve or return them.</EmptyState>
    );
  const rows = [...q.data].sort((a, b) => (a.submittedAt ?? '').localeCompare(b.submittedAt ?? ''));
  return (
    <ul className="divide-y divide-ink/10">
      {(compact ? rows.slice(0, 5) : rows).map((r) => (
        <li key={r.id} className="flex flex-wrap items-baseline justify-between gap-2 py-2">
          <Link to={`/recipes/${r.id}`} className={cx('font-medium text-accent-dark hover:underline', focusRing)}>
            {r.name} v{r.version}
          </Link>
          <span className="text-sm text-ink-soft">
            from {r.proposer?.name ?? 'someone'}
            {r.submittedAt ? `, submitted ${formatDateTime(r.submittedAt)}` : ''}
          </span>
        </li>
      ))}
    </ul>
  );
}
