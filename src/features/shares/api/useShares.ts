import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { ShareListResponse } from '@shared/schemas/shares';

export const sharesQueryKey = (reportId: number) => ['reports', reportId, 'shares'] as const;

/** GET /api/reports/:id/shares: the report's links with state and openings (report owners). */
export function useShares(reportId: number, enabled = true) {
  return useQuery({
    queryKey: sharesQueryKey(reportId),
    queryFn: async () => (await api(`/reports/${reportId}/shares`, { schema: ShareListResponse })).links,
    enabled: enabled && Number.isInteger(reportId) && reportId > 0,
  });
}
