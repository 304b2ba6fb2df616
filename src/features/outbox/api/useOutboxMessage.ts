import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { OutboxMessage } from '@shared/schemas/outbox';
import { outboxQueryKey } from './useOutbox';

export const outboxMessageQueryKey = (id: number) => [...outboxQueryKey, 'message', id] as const;

/** GET /api/outbox/:id: one message with its text (and HTML when it had one). */
export function useOutboxMessage(id: number | null) {
  return useQuery({
    queryKey: outboxMessageQueryKey(id ?? 0),
    queryFn: () => api(`/outbox/${id}`, { schema: OutboxMessage }),
    enabled: id !== null,
  });
}
