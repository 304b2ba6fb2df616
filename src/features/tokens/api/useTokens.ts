import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { TokenListResponse } from '@shared/schemas/tokens';

export const tokensQueryKey = ['tokens'] as const;

/** GET /api/tokens: the signed-in user's API tokens (never their secrets). */
export function useTokens() {
  return useQuery({
    queryKey: tokensQueryKey,
    queryFn: async () => (await api('/tokens', { schema: TokenListResponse })).tokens,
  });
}
