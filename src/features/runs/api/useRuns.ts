import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { RunListResponse } from '@shared/schemas/runs';

export const runsQueryKey = ['runs'] as const;

/** GET /api/runs?studyId=: runs the user may see; polls every 2 s while any is queued or running. */
export function useRuns(studyId?: number) {
  return useQuery({
    queryKey: [...runsQueryKey, 'list', studyId ?? null],
    queryFn: async () => (await api(`/runs${studyId ? `?studyId=${studyId}` : ''}`, { schema: RunListResponse })).runs,
    refetchInterval: (q) => (q.state.data?.some((r) => r.status === 'queued' || r.status === 'running') ? 2000 : false),
  });
}
