/** Biologist: the studies they run, each with its Compare and Reports. */
import { Link } from 'react-router';
import type { StudySummary } from '@shared/schemas/studies';
import { ButtonLink } from '@/components/Button';
import { Card } from '@/components/Card';
import { EmptyState } from '@/components/EmptyState';
import { focusRing } from '@/lib/cx';
import { plural } from '@shared/format/plural';

export function BiologistPanel({ studies, meId }: { studies: StudySummary[]; meId: number }) {
  const mine = studies.filter((s) => s.ownerId === meId || s.permissions.includes('edit_structure'));
  return (
    <section aria-labelledby="home-biologist" className="flex flex-col gap-4">
      <h2 id="home-biologist">Your studies</h2>
      {mine.length === 0 ? (
        <EmptyState title="You have no studies yet" action={<ButtonLink to="/studies" variant="primary">Start a study</ButtonLink>}>
          A study groups conditions and their coverslips; compare and report from it.
        </EmptyState>
      ) : (
        <div className="grid gap-3 md:grid-cols-2">
          {mine.map((s) => (
            <Card key={s.id}>
              <Link to={`/studies/${s.id}`} className={`rounded text-base font-semibold text-accent-dark hover:underline ${focusRing}`}>
                {s.name}
              </Link>
              <p className="mt-1 text-xs text-ink-soft">
                {plural(s.conditionCount, 'condition')} · {plural(s.coverslipCount, 'coverslip')} · {plural(s.fieldCount, 'field')}
              </p>
              {s.fieldCount === 0 && <p className="mt-2 text-xs text-warn">No fields uploaded yet.</p>}
              <div className="mt-3 flex flex-wrap gap-2">
                <ButtonLink size="sm" to={`/studies/${s.id}/compare`}>
                  Compare
                </ButtonLink>
                <ButtonLink size="sm" to={`/studies/${s.id}/reports`}>
                  Reports
                </ButtonLink>
                <ButtonLink size="sm" to={`/studies/${s.id}/cell-table`}>
                  Cell table
                </ButtonLink>
              </div>
            </Card>
          ))}
        </div>
      )}
    </section>
  );
}
