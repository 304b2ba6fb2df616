import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { ExclusionHistory } from '@shared/schemas/cell-table';

export const exclusionHistoryQueryKey = (cellId: number) => ['cells', cellId, 'exclusion-history'] as const;

/** GET /api/cells/:cellId/exclusion-history: who excluded or restored the cell, when, and why. */
export function useExclusionHistory(cellId: number | null) {
  return useQuery({
    queryKey: exclusionHistoryQueryKey(cellId ?? 0),
    queryFn: () => api(`/cells/${cellId}/exclusion-history`, { schema: ExclusionHistory }),
    enabled: !!cellId,
  });
}
