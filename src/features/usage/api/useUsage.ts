import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { UsageResponse } from '@shared/schemas/usage';

export const usageQueryKey = ['usage'] as const;

/** GET /api/usage?from=&to=: per lab and month, for facility managers. */
export function useUsage(range: { from?: string; to?: string }, enabled = true) {
  const qs = new URLSearchParams(Object.entries(range).filter((e): e is [string, string] => !!e[1])).toString();
  return useQuery({ queryKey: [...usageQueryKey, qs], queryFn: () => api(`/usage${qs ? `?${qs}` : ''}`, { schema: UsageResponse }), enabled });
}
