import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { GridResponse } from '@shared/schemas/cell-table';

export const fieldResultsQueryKey = (studyId: number, fieldId: number) => ['studies', studyId, 'cell-table', { fieldId }] as const;

/** GET /api/studies/:studyId/cell-table?fieldId= — per-cell coefficients of the latest run (default source). */
export function useFieldResults(studyId: number, fieldId: number) {
  return useQuery({
    queryKey: fieldResultsQueryKey(studyId, fieldId),
    queryFn: ({ signal }) => api(`/studies/${studyId}/cell-table?fieldId=${fieldId}&pageSize=500&sort=cell`, { schema: GridResponse, signal }),
    retry: false,
  });
}
