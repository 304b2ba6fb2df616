import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { StudyDetail, type UpdateCoverslipRequest } from '@shared/schemas/studies';
import { storeStudy } from './useStudy';

/** PATCH /api/coverslips/:id (name, replicate, date, notes). */
export function useUpdateCoverslip() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, ...body }: UpdateCoverslipRequest & { id: number }) => api(`/coverslips/${id}`, { method: 'PATCH', body, schema: StudyDetail }),
    onSuccess: (study) => storeStudy(qc, study),
  });
}
