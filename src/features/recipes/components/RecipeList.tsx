/** Recipes with status filters; each row opens the editor. */
import { useState } from 'react';
import { Link } from 'react-router';
import { EmptyState, ErrorNotice, Loading, cx, focusRing } from '@/components';
import { RECIPE_STATUSES, type RecipeStatus } from '@shared/schemas/recipes';
import { useRecipes } from '../api/useRecipes';
import { RecipeStatusBadge, RECIPE_STATUS_LABEL } from './RecipeStatusBadge';
import { formatDateTime } from '@shared/format/datetime';

export function RecipeList({ initial = ['draft', 'submitted', 'approved', 'returned'] }: { initial?: RecipeStatus[] }) {
  const [shown, setShown] = useState<RecipeStatus[]>(initial);
  const q = useRecipes(shown.length === RECIPE_STATUSES.length ? undefined : shown);
  const toggle = (s: RecipeStatus) => setShown((cur) => (cur.includes(s) ? cur.filter((x) => x !== s) : [...cur, s]));
  return (
    <div>
      <fieldset className="mb-4 flex flex-wrap items-center gap-2">
        <legend className="sr-only">Show recipes that are</legend>
        <span className="text-sm text-ink-soft">Show:</span>
        {RECIPE_STATUSES.map((s) => (
          <label key={s} className={cx('flex cursor-pointer items-center gap-1.5 rounded-full border px-3 py-1 text-sm', shown.includes(s) ? 'border-accent bg-accent-soft text-accent-dark' : 'border-ink/15 text-ink-soft', focusRing)}>
            <input type="checkbox" className="sr-only" checked={shown.includes(s)} onChange={() => toggle(s)} />
            {RECIPE_STATUS_LABEL(s)}
          </label>
        ))}
      </fieldset>
      {q.isPending ? (
        <Loading />
      ) : q.error ? (
        <ErrorNotice error={q.error} />
      ) : !q.data.length ? (
        <EmptyState title="No recipes with these statuses">Propose one: name it, choose its settings, and submit it for review.</EmptyState>
      ) : (
        <table className="w-full text-left text-sm">
          <thead className="text-left text-ink-soft">
            <tr>
              <th scope="col" className="py-2 pr-4 font-medium">Recipe</th>
              <th scope="col" className="py-2 pr-4 font-medium">Version</th>
              <th scope="col" className="py-2 pr-4 font-medium">Status</th>
              <th scope="col" className="py-2 pr-4 font-medium">Proposed by</th>
              <th scope="col" className="py-2 pr-4 font-medium">Reviewed by</th>
            </tr>
          </thead>
          <tbody>
            {q.data.map((r) => (
              <tr key={r.id} className="border-t border-ink/10">
                <td className="py-2 pr-4">
                  <Link to={`/recipes/${r.id}`} className={cx('font-medium text-accent-dark hover:underline', focusRing)}>
                    {r.name}
                  </Link>
                  {r.description && <div className="text-xs text-ink-soft line-clamp-1">{r.description}</div>}
                </td>
                <td className="py-2 pr-4 font-mono whitespace-nowrap">v{r.version}</td>
                <td className="py-2 pr-4">
                  <RecipeStatusBadge status={r.status} />
                </td>
                <td className="py-2 pr-4">{r.proposer?.name ?? '—'}</td>
                <td className="py-2 pr-4">{r.reviewer ? `${r.reviewer.name}${r.reviewedAt ? ` · ${formatDateTime(r.reviewedAt)}` : ''}` : '—'}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </div>
  );
}
