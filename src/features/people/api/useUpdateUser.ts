import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { UserRow, type UpdateUserRequest } from '@shared/schemas/people';
import { usersQueryKey } from './useUsers';
import { labsQueryKey } from './useLabs';

/** PATCH /api/users/:id (name, roles, disabled; disabling signs the user out). */
export function useUpdateUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, ...body }: UpdateUserRequest & { id: number }) => api(`/users/${id}`, { method: 'PATCH', body, schema: UserRow }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: usersQueryKey });
      void qc.invalidateQueries({ queryKey: labsQueryKey });
    },
  });
}
