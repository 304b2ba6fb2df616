import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { Comparison } from '@shared/schemas/compare';

export const comparisonQueryKey = (studyId: number) => ['studies', studyId, 'compare'] as const;

/** GET /api/studies/:studyId/compare?<params>: the replicate-aware comparison of one coefficient. */
export function useComparison(studyId: number, params: URLSearchParams) {
  const qs = params.toString();
  return useQuery({
    queryKey: [...comparisonQueryKey(studyId), qs],
    queryFn: ({ signal }) => api(`/studies/${studyId}/compare?${qs}`, { schema: Comparison, signal }),
    placeholderData: keepPreviousData,
    enabled: studyId > 0,
    staleTime: 60_000,
  });
}
