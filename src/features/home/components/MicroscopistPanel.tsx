/** Microscopist: coverslips whose fields still need cells outlined (or fields at all), and the latest runs. */
import { useQueries } from '@tanstack/react-query';
import { Link } from 'react-router';
import type { StudySummary } from '@shared/schemas/studies';
import { studyQueryOptions } from '@/features/studies';
import { useRecentRuns } from '../api/useRecentRuns';
import { Badge } from '@/components/Badge';
import { Card } from '@/components/Card';
import { focusRing } from '@/lib/cx';
import { plural } from '@shared/format/plural';

const RUN_TONE = { queued: 'neutral', running: 'accent', done: 'accent', failed: 'danger', partial: 'warn' } as const;

export function MicroscopistPanel({ studies }: { studies: StudySummary[] }) {
  const workable = studies.filter((s) => s.permissions.includes('edit_images'));
  const details = useQueries({ queries: workable.slice(0, 20).map((s) => studyQueryOptions(s.id)) });
  const runs = useRecentRuns();
  const todo = details.flatMap((q) =>
    q.data
      ? q.data.conditions.flatMap((c) =>
          c.coverslips
            .filter((cs) => cs.fieldCount === 0 || cs.cellCount === 0)
            .map((cs) => ({ study: q.data, condition: c.name, coverslip: cs })),
        )
      : [],
  );
  const loading = details.some((q) => q.isPending);

  return (
    <section aria-labelledby="home-microscopist" className="flex flex-col gap-4">
      <h2 id="home-microscopist">Imaging</h2>
      <div className="grid gap-4 xl:grid-cols-2">
        <Card title="Fields waiting for cells">
          {loading && todo.length === 0 ? (
            <p className="text-sm text-ink-soft">Loading…</p>
          ) : todo.length === 0 ? (
            <p className="text-sm text-ink-soft">Every coverslip you can work on has fields with cells outlined.</p>
          ) : (
            <ul className="divide-y divide-ink/5 text-sm">
              {todo.slice(0, 12).map(({ study, condition, coverslip }) => (
                <li key={coverslip.id} className="flex flex-wrap items-center gap-2 py-1.5">
                  <Link to={`/studies/${study.id}`} className={`rounded font-medium hover:text-accent-dark hover:underline ${focusRing}`}>
                    {study.name}
                  </Link>
                  <span className="text-ink-soft">
                    {condition} · {coverslip.name}
                  </span>
                  <span className="ml-auto">
                    {coverslip.fieldCount === 0 ? <Badge>no fields yet</Badge> : <Badge tone="warn">{plural(coverslip.fieldCount, 'field')}, no cells</Badge>}
                  </span>
                </li>
              ))}
            </ul>
          )}
        </Card>
        <Card title="Recent runs" actions={<Link to="/runs" className={`rounded text-sm text-accent-dark hover:underline ${focusRing}`}>All runs</Link>}>
          {runs.isError ? (
            <p className="text-sm text-ink-soft">Runs could not be read: {runs.error.message}</p>
          ) : !runs.data || runs.data.length === 0 ? (
            <p className="text-sm text-ink-soft">{runs.isPending ? 'Loading…' : 'No runs yet.'}</p>
          ) : (
            <ul className="divide-y divide-ink/5 text-sm">
              {runs.data.map((r) => (
                <li key={r.id} className="flex flex-wrap items-center gap-2 py-1.5">
                  <Link to={`/runs?studyId=${r.studyId}&run=${r.id}`} className={`rounded font-medium text-accent-dark hover:underline ${focusRing}`}>
                    {r.studyName}
                  </Link>
                  <span className="text-ink-soft">
                    {r.scope.kind === 'study' ? 'whole study' : r.scope.name} · {r.recipe.name} v{r.recipe.version}
                  </span>
                  <span className="ml-auto flex items-center gap-1">
                    {r.provisional && <Badge tone="warn">provisional</Badge>}
                    <Badge tone={RUN_TONE[r.status]}>
                      {r.status} {r.fieldsDone}/{r.fieldsTotal}
                    </Badge>
                  </span>
                </li>
              ))}
            </ul>
          )}
        </Card>
      </div>
    </section>
  );
}
