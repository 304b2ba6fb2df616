import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { UserListResponse } from '@shared/schemas/people';

export const usersQueryKey = ['users'] as const;

/** GET /api/users (facility managers). */
export function useUsers(enabled = true) {
  return useQuery({
    queryKey: usersQueryKey,
    queryFn: async () => (await api('/users', { schema: UserListResponse })).users,
    enabled,
  });
}
