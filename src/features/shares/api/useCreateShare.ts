import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { ShareListResponse, type CreateShareRequest } from '@shared/schemas/shares';
import { sharesQueryKey } from './useShares';

/** POST /api/reports/:id/shares: e-mail a personal link to each address. */
export function useCreateShare(reportId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateShareRequest) => api(`/reports/${reportId}/shares`, { body, schema: ShareListResponse }),
    onSuccess: (r) => qc.setQueryData(sharesQueryKey(reportId), r.links),
  });
}
