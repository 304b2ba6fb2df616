import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { meQueryKey } from './useMe';

/** POST /api/auth/logout: clears every cached query so nothing of the last user stays in memory. */
export function useSignOut() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => api<{ ok: true }>('/auth/logout', { method: 'POST' }),
    onSettled: () => {
      qc.clear();
      qc.setQueryData(meQueryKey, null);
    },
  });
}
