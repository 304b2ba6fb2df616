import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { Lab } from '@shared/schemas/people';
import { labsQueryKey } from './useLabs';
import { usersQueryKey } from './useUsers';

/** PUT /api/labs/:id/members/:userId. */
export function useAddLabMember() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ labId, userId }: { labId: number; userId: number }) => api(`/labs/${labId}/members/${userId}`, { method: 'PUT', schema: Lab }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: labsQueryKey });
      void qc.invalidateQueries({ queryKey: usersQueryKey });
    },
  });
}
