/** Captured messages, newest first; choosing one opens it beside the list. */
import type { OutboxSummary } from '@shared/schemas/outbox';
import { Badge } from '@/components/Badge';
import { cx, focusRing } from '@/lib/cx';
import { formatDateTime } from '@shared/format/datetime';

export function OutboxList({ messages, selected, onSelect }: { messages: OutboxSummary[]; selected: number | null; onSelect: (id: number) => void }) {
  return (
    <ul className="flex flex-col divide-y divide-ink/10 rounded-lg border border-ink/10 bg-white" aria-label="Messages">
      {messages.map((m) => (
        <li key={m.id}>
          <button
            type="button"
            onClick={() => onSelect(m.id)}
            aria-current={selected === m.id ? 'true' : undefined}
            className={cx('block w-full px-4 py-2.5 text-left text-sm', focusRing, selected === m.id ? 'bg-accent-soft/70' : 'hover:bg-paper')}
          >
            <span className="block truncate font-medium">{m.subject || '(no subject)'}</span>
            <span className="flex items-center gap-2 text-xs text-ink-soft">
              <span className="truncate">to {m.to}</span>
              <span className="ml-auto shrink-0">{formatDateTime(m.receivedAt)}</span>
              {m.via === 'relay' && <Badge>relayed</Badge>}
            </span>
          </button>
        </li>
      ))}
    </ul>
  );
}
