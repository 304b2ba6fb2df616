import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { AutoOutlineResponse, type AutoOutlineRequest } from '@shared/schemas/cells';
import { cellsQueryKey } from './useCells';

/** POST /api/fields/:id/cells/auto — automatic outlines with the stated parameters (`preview: true` stores nothing). */
export function useAutoOutline(fieldId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: AutoOutlineRequest) => api(`/fields/${fieldId}/cells/auto`, { method: 'POST', body, schema: AutoOutlineResponse }),
    onSuccess: (r) => (r.kept ? qc.invalidateQueries({ queryKey: cellsQueryKey(fieldId) }) : undefined),
  });
}
