import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { ReportDetail } from '@shared/schemas/reports';

export const reportQueryKey = (id: number) => ['reports', id] as const;

/** GET /api/reports/:id: one frozen report (it never changes, so it is cached for good). */
export function useReport(id: number) {
  return useQuery({
    queryKey: reportQueryKey(id),
    queryFn: () => api(`/reports/${id}`, { schema: ReportDetail }),
    enabled: Number.isInteger(id) && id > 0,
    staleTime: Infinity,
  });
}
