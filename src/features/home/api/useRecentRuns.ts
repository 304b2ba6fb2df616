import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { RunListResponse } from '@shared/schemas/runs';

export const recentRunsQueryKey = ['runs', 'list', 'recent'] as const;

/** GET /api/runs: the runs the user may see; Home shows the newest few. */
export function useRecentRuns(enabled = true, count = 5) {
  return useQuery({
    queryKey: recentRunsQueryKey,
    queryFn: async () => (await api('/runs', { schema: RunListResponse })).runs,
    select: (runs) => [...runs].sort((a, b) => b.createdAt.localeCompare(a.createdAt)).slice(0, count),
    enabled,
  });
}
