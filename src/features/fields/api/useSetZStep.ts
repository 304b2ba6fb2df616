import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { FieldSummary, type SetFieldZStepRequest } from '@shared/schemas/fields';
import { fieldKeys } from './keys';

/** PUT /api/fields/:id/z-step { zStepUm } — µm between the slices of a stack whose files state none (null clears it). */
export function useSetZStep(fieldId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: SetFieldZStepRequest) => api(`/fields/${fieldId}/z-step`, { method: 'PUT', body, schema: FieldSummary }),
    // the detail (header, orthogonal views' z scale) and the lists that show the field
    onSuccess: () => void qc.invalidateQueries({ queryKey: fieldKeys.all }),
  });
}
