import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { ShareLinkSummary } from '@shared/schemas/shares';
import { sharesQueryKey } from './useShares';

/** POST /api/shares/:id/revoke: the link stops working at once (410 for its recipient). */
export function useRevokeShare(reportId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (linkId: number) => api(`/shares/${linkId}/revoke`, { method: 'POST', schema: ShareLinkSummary }),
    onSuccess: () => qc.invalidateQueries({ queryKey: sharesQueryKey(reportId) }),
  });
}
