import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { StudyDetail } from '@shared/schemas/studies';
import { storeStudy } from './useStudy';

/** DELETE /api/conditions/:id (with its coverslips and fields). */
export function useDeleteCondition() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => api(`/conditions/${id}`, { method: 'DELETE', schema: StudyDetail }),
    onSuccess: (study) => storeStudy(qc, study),
  });
}
