import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { RunDetail } from '@shared/schemas/runs';
import { runsQueryKey } from './useRuns';

export const runQueryKey = (id: number) => [...runsQueryKey, 'one', id] as const;

/** GET /api/runs/:id: progress per field; polls every second while the run is active. */
export function useRun(id: number | null) {
  return useQuery({
    queryKey: runQueryKey(id ?? 0),
    enabled: !!id,
    queryFn: () => api(`/runs/${id}`, { schema: RunDetail }),
    refetchInterval: (q) => (q.state.data && (q.state.data.status === 'queued' || q.state.data.status === 'running') ? 1000 : false),
  });
}
