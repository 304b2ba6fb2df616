import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { Lab, type UpdateLabRequest } from '@shared/schemas/people';
import { labsQueryKey } from './useLabs';

/** PATCH /api/labs/:id (rename). */
export function useUpdateLab() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, ...body }: UpdateLabRequest & { id: number }) => api(`/labs/${id}`, { method: 'PATCH', body, schema: Lab }),
    onSuccess: () => void qc.invalidateQueries({ queryKey: labsQueryKey }),
  });
}
