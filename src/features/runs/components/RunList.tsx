/** Runs, newest first, with progress; polling while any is active (useRuns). */
import { Badge, EmptyState, ErrorNotice, Loading, cx, focusRing } from '@/components';
import { ProvisionalBadge } from '@/features/recipes';
import { useRuns } from '../api/useRuns';
import { RunProgress, runStatusLabel } from './RunProgress';

/** `canStart`: the viewer may start runs here (the empty list then points to the start form; otherwise it says nothing about starting). */
export function RunList({ studyId, selected, onSelect, canStart = false }: { studyId?: number; selected?: number | null; onSelect?: (id: number) => void; canStart?: boolean }) {
  const q = useRuns(studyId);
  if (q.isPending) return <Loading />;
  if (q.error) return <ErrorNotice error={q.error} />;
  if (!q.data.length)
    return canStart ? (
      <EmptyState title="No runs yet">Start one above: choose an approved recipe and the fields to measure.</EmptyState>
    ) : (
      <EmptyState title="No runs yet">Runs in the studies you can see will appear here.</EmptyState>
    );
  return (
    <table className="w-full text-sm">
      <thead className="text-left text-ink-soft">
        <tr>
          <th className="py-2 font-medium">Run</th>
          <th className="py-2 font-medium">Recipe</th>
          <th className="py-2 font-medium">Scope</th>
          <th className="py-2 font-medium">Status</th>
          <th className="py-2 font-medium">Progress</th>
        </tr>
      </thead>
      <tbody>
        {q.data.map((r) => (
          <tr key={r.id} className={cx('border-t border-ink/10 align-top', selected === r.id && 'bg-accent-soft/40')}>
            <td className="py-2">
              <button type="button" className={cx('font-mono text-accent-dark hover:underline', focusRing)} onClick={() => onSelect?.(r.id)}>
                #{r.id}
              </button>
              <div className="text-xs text-ink-soft">{r.studyName}</div>
            </td>
            <td className="py-2">
              {r.recipe.name} v{r.recipe.version} {r.provisional && <ProvisionalBadge />}
            </td>
            <td className="py-2">
              <span className="text-ink-soft">{r.scope.kind}</span> {r.scope.name}
            </td>
            <td className="py-2">
              <Badge tone={r.status === 'failed' ? 'danger' : r.status === 'partial' ? 'warn' : r.status === 'done' ? 'accent' : 'neutral'}>{runStatusLabel(r.status)}</Badge>
            </td>
            <td className="py-2">
              <RunProgress run={r} />
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}
