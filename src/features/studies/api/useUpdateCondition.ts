import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { StudyDetail, type UpdateConditionRequest } from '@shared/schemas/studies';
import { storeStudy } from './useStudy';

/** PATCH /api/conditions/:id (rename). */
export function useUpdateCondition() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, ...body }: UpdateConditionRequest & { id: number }) => api(`/conditions/${id}`, { method: 'PATCH', body, schema: StudyDetail }),
    onSuccess: (study) => storeStudy(qc, study),
  });
}
