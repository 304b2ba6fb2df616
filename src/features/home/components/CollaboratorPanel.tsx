/** Collaborator: what was shared with them, read-only. */
import { Link } from 'react-router';
import type { StudySummary } from '@shared/schemas/studies';
import { Card } from '@/components/Card';
import { EmptyState } from '@/components/EmptyState';
import { focusRing } from '@/lib/cx';

export function CollaboratorPanel({ studies }: { studies: StudySummary[] }) {
  return (
    <section aria-labelledby="home-collaborator" className="flex flex-col gap-4">
      <h2 id="home-collaborator">Shared with you</h2>
      {studies.length === 0 ? (
        <EmptyState title="Nothing has been shared with you yet">When a study owner shares a study or a report with you, it appears here. Links sent by e-mail open directly.</EmptyState>
      ) : (
        <div className="grid gap-3 md:grid-cols-2">
          {studies.map((s) => (
            <Card key={s.id}>
              <Link to={`/studies/${s.id}/reports`} className={`rounded text-base font-semibold text-accent-dark hover:underline ${focusRing}`}>
                {s.name}
              </Link>
              <p className="mt-1 text-xs text-ink-soft">
                from {s.ownerName}, {s.labName}
              </p>
              <p className="mt-2 text-sm">
                <Link to={`/studies/${s.id}/reports`} className={`rounded text-accent-dark hover:underline ${focusRing}`}>
                  Reports
                </Link>
                {' · '}
                <Link to={`/studies/${s.id}`} className={`rounded text-accent-dark hover:underline ${focusRing}`}>
                  Study
                </Link>
              </p>
            </Card>
          ))}
        </div>
      )}
    </section>
  );
}
