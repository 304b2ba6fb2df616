import { useMutation, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { api } from '@/lib/api';
import { DeleteFieldResponse } from '@shared/schemas/fields';
import { fieldKeys } from './keys';

/** DELETE /api/fields/:id — soft delete while measurements refer to the field. */
export function useDeleteField() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (fieldId: number) => api<z.infer<typeof DeleteFieldResponse>>(`/fields/${fieldId}`, { method: 'DELETE', schema: DeleteFieldResponse }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: fieldKeys.all });
      void qc.invalidateQueries({ queryKey: ['studies'] }); // coverslip field counts
    },
  });
}
