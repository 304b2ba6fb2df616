import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { TokenSummary } from '@shared/schemas/tokens';
import { tokensQueryKey } from './useTokens';

/** DELETE /api/tokens/:id: the token stops working at once (401 for whoever holds it). */
export function useRevokeToken() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => api(`/tokens/${id}`, { method: 'DELETE', schema: TokenSummary }),
    onSuccess: () => qc.invalidateQueries({ queryKey: tokensQueryKey }),
  });
}
