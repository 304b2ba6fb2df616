/** Route module: Outbox (facility managers): every e-mail the server sent; `?message=<id>` opens one. */
import { useSearchParams } from 'react-router';
import { useMe } from '@/features/auth';
import { useOutbox } from '@/features/outbox';
import { OutboxList } from '@/features/outbox';
import { OutboxMessageView } from '@/features/outbox';
import { Button } from '@/components/Button';
import { ErrorNotice } from '@/components/Caution';
import { EmptyState } from '@/components/EmptyState';
import { PageHeader } from '@/components/PageHeader';
import { Loading } from '@/components/Spinner';
import { Component as NotFound } from './NotFound';

export function Component() {
  const me = useMe();
  const allowed = !!me.data?.roles.includes('facility_manager');
  const outbox = useOutbox({ enabled: allowed });
  const [params, setParams] = useSearchParams();
  const selected = params.get('message') ? Number(params.get('message')) : null;

  if (!me.data) return <Loading />;
  if (!allowed) return <NotFound />;
  const messages = outbox.data?.pages.flatMap((p) => p.messages) ?? [];

  return (
    <>
      <PageHeader
        title="Outbox"
        description="Every e-mail Syntopy sent: invitations, share links, notices. Without a mail relay configured they are kept only here."
        actions={
          <Button onClick={() => outbox.refetch()} pending={outbox.isRefetching}>
            Refresh
          </Button>
        }
      />
      {outbox.isPending ? (
        <Loading />
      ) : outbox.isError ? (
        <ErrorNotice error={outbox.error} />
      ) : messages.length === 0 ? (
        <EmptyState title="No messages yet">Invitations you send from People & labs appear here.</EmptyState>
      ) : (
        <div className="grid gap-4 lg:grid-cols-[minmax(16rem,22rem)_1fr]">
          <div className="flex flex-col gap-2">
            <OutboxList messages={messages} selected={selected} onSelect={(id) => setParams({ message: String(id) })} />
            {outbox.hasNextPage && (
              <Button size="sm" onClick={() => outbox.fetchNextPage()} pending={outbox.isFetchingNextPage}>
                Older messages
              </Button>
            )}
          </div>
          <div className="min-w-0">{selected ? <OutboxMessageView id={selected} /> : <p className="py-8 text-center text-sm text-ink-soft">Choose a message to read it.</p>}</div>
        </div>
      )}
    </>
  );
}
