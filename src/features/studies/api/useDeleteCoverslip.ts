import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { StudyDetail } from '@shared/schemas/studies';
import { storeStudy } from './useStudy';

/** DELETE /api/coverslips/:id (with its fields). */
export function useDeleteCoverslip() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => api(`/coverslips/${id}`, { method: 'DELETE', schema: StudyDetail }),
    onSuccess: (study) => storeStudy(qc, study),
  });
}
