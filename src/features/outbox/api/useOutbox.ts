import { useInfiniteQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { OutboxListResponse } from '@shared/schemas/outbox';

export const outboxQueryKey = ['outbox'] as const;

/** GET /api/outbox?limit=&before=: captured messages, newest first, paged by id cursor. */
export function useOutbox({ limit = 50, enabled = true }: { limit?: number; enabled?: boolean } = {}) {
  return useInfiniteQuery({
    queryKey: [...outboxQueryKey, 'list', limit],
    queryFn: ({ pageParam }) => api(`/outbox?limit=${limit}${pageParam ? `&before=${pageParam}` : ''}`, { schema: OutboxListResponse }),
    initialPageParam: null as number | null,
    getNextPageParam: (last) => last.nextBefore,
    enabled,
  });
}
