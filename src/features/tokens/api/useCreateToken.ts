import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { CreatedToken, type CreateTokenRequest } from '@shared/schemas/tokens';
import { tokensQueryKey } from './useTokens';

/** POST /api/tokens: a new token; the answer holds the secret, which the server cannot show again. */
export function useCreateToken() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateTokenRequest) => api('/tokens', { body, schema: CreatedToken }),
    onSuccess: () => qc.invalidateQueries({ queryKey: tokensQueryKey }),
  });
}
