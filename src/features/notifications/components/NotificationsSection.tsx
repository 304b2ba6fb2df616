/** Account → E-mail notices: one switch per kind of notification, saved as it changes. */
import { ErrorNotice } from '@/components/Caution';
import { Loading } from '@/components/Spinner';
import { useNotifications } from '../api/useNotifications';
import { useUpdateNotifications } from '../api/useUpdateNotifications';

export function NotificationsSection() {
  const q = useNotifications();
  const m = useUpdateNotifications();
  if (q.isPending) return <Loading />;
  if (q.isError) return <ErrorNotice error={q.error} />;
  const kinds = q.data.kinds;
  return (
    <div className="space-y-2 text-sm">
      <p className="text-ink-soft">Syntopy e-mails you when something needs you or is done. Untick what you would rather not receive.</p>
      <ul className="space-y-1.5">
        {kinds.map((k) => (
          <li key={k.kind}>
            <label className="flex items-start gap-2">
              <input
                type="checkbox"
                className="mt-0.5"
                checked={k.on}
                disabled={m.isPending}
                onChange={(e) => m.mutate({ off: kinds.filter((x) => (x.kind === k.kind ? !e.target.checked : !x.on)).map((x) => x.kind) })}
              />
              <span>
                {k.label} <span className="text-ink-soft">(sent to {k.who})</span>
              </span>
            </label>
          </li>
        ))}
      </ul>
      <ErrorNotice error={m.error} />
    </div>
  );
}
