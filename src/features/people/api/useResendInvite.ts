import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { InviteUserResponse } from '@shared/schemas/people';
import { usersQueryKey } from './useUsers';
import { outboxQueryKey } from '@/features/outbox';

/** POST /api/users/:id/invite: a fresh link; the old one stops working. */
export function useResendInvite() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => api(`/users/${id}/invite`, { method: 'POST', schema: InviteUserResponse }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: usersQueryKey });
      void qc.invalidateQueries({ queryKey: outboxQueryKey });
    },
  });
}
