import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { SharedReportResponse } from '@shared/schemas/shares';

export const sharedReportQueryKey = (token: string) => ['shared', token] as const;

/** GET /api/shared/:token: the read-only report a share link opens (no account; each load is logged). */
export function useSharedReport(token: string) {
  return useQuery({
    queryKey: sharedReportQueryKey(token),
    queryFn: () => api(`/shared/${encodeURIComponent(token)}`, { schema: SharedReportResponse }),
    enabled: !!token,
    staleTime: Infinity,
    retry: false,
  });
}
