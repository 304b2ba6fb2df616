import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { InviteUserResponse, type InviteUserRequest } from '@shared/schemas/people';
import { usersQueryKey } from './useUsers';
import { labsQueryKey } from './useLabs';
import { outboxQueryKey } from '@/features/outbox';

/** POST /api/users: creates the account and mails an invitation link. */
export function useInviteUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: InviteUserRequest) => api('/users', { body, schema: InviteUserResponse }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: usersQueryKey });
      void qc.invalidateQueries({ queryKey: labsQueryKey });
      void qc.invalidateQueries({ queryKey: outboxQueryKey });
    },
  });
}
