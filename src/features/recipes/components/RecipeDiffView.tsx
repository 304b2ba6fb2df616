/** Two versions side by side, setting by setting; changed settings are marked. */
import { ErrorNotice, Loading, cx } from '@/components';
import { useRecipeDiff } from '../api/useRecipeDiff';
import { RecipeStatusBadge } from './RecipeStatusBadge';
import { plural, noun } from '@shared/format/plural';

export function RecipeDiffView({ a, b }: { a: number; b: number }) {
  const q = useRecipeDiff(a, b);
  if (q.isPending) return <Loading />;
  if (q.error) return <ErrorNotice error={q.error} />;
  const { entries } = q.data;
  const changed = entries.filter((e) => e.changed).length;
  return (
    <div>
      <p className="mb-2 text-sm text-ink-soft">{changed === 0 ? 'The two versions are the same.' : `${plural(changed, 'setting')} ${noun(changed, 'differs', 'differ')}.`}</p>
      <table className="w-full table-fixed text-sm">
        <thead>
          <tr className="text-left">
            <th className="w-40 py-2 font-medium text-ink-soft">Setting</th>
            {[q.data.a, q.data.b].map((r) => (
              <th key={r.id} className="py-2 font-medium">
                {r.name} v{r.version} <RecipeStatusBadge status={r.status} />
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {entries.map((e) => (
            <tr key={e.key} className={cx('border-t border-ink/10 align-top', e.changed && 'bg-warn-soft/50')}>
              <th scope="row" className="py-2 pr-2 text-left font-medium">
                {e.label}
                {e.changed && <span className="ml-1 text-xs font-semibold text-warn">changed</span>}
              </th>
              <td className="py-2 pr-3">{e.a || '—'}</td>
              <td className="py-2">{e.b || '—'}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
