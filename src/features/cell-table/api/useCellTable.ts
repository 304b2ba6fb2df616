import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { GridResponse } from '@shared/schemas/cell-table';

export const cellTableQueryKey = (studyId: number) => ['studies', studyId, 'cell-table'] as const;

/** GET /api/studies/:studyId/cell-table?<params>: one page of the Cell table (server-side paging and sorting). */
export function useCellTable(studyId: number, params: URLSearchParams) {
  const qs = params.toString();
  return useQuery({
    queryKey: [...cellTableQueryKey(studyId), qs],
    queryFn: ({ signal }) => api(`/studies/${studyId}/cell-table?${qs}`, { schema: GridResponse, signal }),
    placeholderData: keepPreviousData,
    enabled: studyId > 0,
  });
}
