import { useQuery } from '@tanstack/react-query';
import { api, ApiError } from '@/lib/api';
import { MeResponse, type MeUser } from '@shared/schemas/auth';

export const meQueryKey = ['auth', 'me'] as const;

/** The signed-in user, or null when signed out. */
export function useMe() {
  return useQuery<MeUser | null>({
    queryKey: meQueryKey,
    queryFn: async () => {
      try {
        return (await api('/auth/me', { schema: MeResponse })).user;
      } catch (e) {
        if (e instanceof ApiError && e.status === 401) return null;
        throw e;
      }
    },
  });
}
