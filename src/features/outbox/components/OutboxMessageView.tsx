/** One message: headers and its text with clickable links. */
import { useOutboxMessage } from '../api/useOutboxMessage';
import { Card } from '@/components/Card';
import { ErrorNotice } from '@/components/Caution';
import { Loading } from '@/components/Spinner';
import { LinkifiedText } from './LinkifiedText';
import { formatDateTime } from '@shared/format/datetime';

export function OutboxMessageView({ id }: { id: number }) {
  const msg = useOutboxMessage(id);
  if (msg.isPending) return <Loading />;
  if (msg.isError) return <ErrorNotice error={msg.error} />;
  const m = msg.data;
  return (
    <Card aria-label={`Message: ${m.subject}`}>
      <h2 className="mb-2 text-base font-semibold">{m.subject || '(no subject)'}</h2>
      <dl className="mb-4 grid grid-cols-[auto_1fr] gap-x-3 gap-y-0.5 text-xs">
        <dt className="text-ink-soft">From</dt>
        <dd>{m.from}</dd>
        <dt className="text-ink-soft">To</dt>
        <dd>{m.to}</dd>
        <dt className="text-ink-soft">When</dt>
        <dd>{formatDateTime(m.receivedAt)}</dd>
        <dt className="text-ink-soft">Delivered</dt>
        <dd>{m.via === 'sink' ? 'kept here (no mail relay configured)' : 'handed to the mail relay'}</dd>
      </dl>
      <div className="border-t border-ink/10 pt-3">
        <LinkifiedText text={m.text} />
      </div>
    </Card>
  );
}
