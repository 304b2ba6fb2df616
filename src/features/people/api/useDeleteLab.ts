import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { OkResponse } from '@shared/schemas/common';
import { labsQueryKey } from './useLabs';
import { usersQueryKey } from './useUsers';

/** DELETE /api/labs/:id (409 while studies belong to it). */
export function useDeleteLab() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => api(`/labs/${id}`, { method: 'DELETE', schema: OkResponse }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: labsQueryKey });
      void qc.invalidateQueries({ queryKey: usersQueryKey });
    },
  });
}
