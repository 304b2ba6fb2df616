import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { ShareLinkSummary } from '@shared/schemas/shares';
import { sharesQueryKey } from './useShares';

/** POST /api/shares/:id/resend: e-mail the same (still active) link again. */
export function useResendShare(reportId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (linkId: number) => api(`/shares/${linkId}/resend`, { method: 'POST', schema: ShareLinkSummary }),
    onSuccess: () => qc.invalidateQueries({ queryKey: sharesQueryKey(reportId) }),
  });
}
