/** Facility manager: recipes waiting for review, recent mail, accounts needing a hand. */
import { Link } from 'react-router';
import { useReviewQueueCount } from '../api/useReviewQueueCount';
import { useOutbox } from '@/features/outbox';
import { useUsers } from '@/features/people';
import { Card } from '@/components/Card';
import { focusRing } from '@/lib/cx';
import { Tile } from './Tile';
import { ReviewQueueList } from '@/features/recipes';
import { formatDateTime } from '@shared/format/datetime';

export function ManagerPanel() {
  const review = useReviewQueueCount();
  const outbox = useOutbox({ limit: 5 });
  const users = useUsers();
  const invited = users.data?.filter((u) => u.status === 'invited').length ?? null;
  const disabled = users.data?.filter((u) => u.status === 'disabled').length ?? null;
  const latest = outbox.data?.pages[0]?.messages.slice(0, 5) ?? [];

  return (
    <section aria-labelledby="home-manager" className="flex flex-col gap-4">
      <h2 id="home-manager">Facility</h2>
      <div className="grid gap-3 sm:grid-cols-3">
        <Tile label="Recipes waiting for review" value={review.isError ? null : (review.data ?? null)} pending={review.isPending} to="/review" tone="attention" note="Approve or return each submitted version." />
        <Tile label="Invitations not yet accepted" value={invited} pending={users.isPending} to="/people" tone="attention" />
        <Tile label="Accounts" value={users.data?.length ?? null} pending={users.isPending} to="/people" note={disabled ? `${disabled} disabled` : undefined} />
      </div>
      <Card title="Review queue" actions={<Link to="/review" className={`rounded text-sm text-accent-dark hover:underline ${focusRing}`}>Open the Review queue</Link>}>
        <ReviewQueueList compact />
      </Card>
      <Card title="Latest mail" actions={<Link to="/outbox" className={`rounded text-sm text-accent-dark hover:underline ${focusRing}`}>Open the Outbox</Link>}>
        {outbox.isError ? (
          <p className="text-sm text-ink-soft">The Outbox could not be read: {outbox.error.message}</p>
        ) : latest.length === 0 ? (
          <p className="text-sm text-ink-soft">{outbox.isPending ? 'Loading…' : 'No mail sent yet.'}</p>
        ) : (
          <ul className="divide-y divide-ink/5 text-sm">
            {latest.map((m) => (
              <li key={m.id} className="flex gap-3 py-1.5">
                <Link to={`/outbox?message=${m.id}`} className={`min-w-0 flex-1 truncate rounded hover:text-accent-dark hover:underline ${focusRing}`}>
                  {m.subject || '(no subject)'}
                </Link>
                <span className="shrink-0 text-xs text-ink-soft">to {m.to}</span>
                <span className="shrink-0 text-xs text-ink-faint">{formatDateTime(m.receivedAt)}</span>
              </li>
            ))}
          </ul>
        )}
      </Card>
    </section>
  );
}
