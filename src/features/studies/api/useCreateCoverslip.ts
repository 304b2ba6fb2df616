import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { StudyDetail, type CreateCoverslipRequest } from '@shared/schemas/studies';
import { storeStudy } from './useStudy';

/** POST /api/conditions/:id/coverslips. */
export function useCreateCoverslip() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ conditionId, ...body }: CreateCoverslipRequest & { conditionId: number }) =>
      api(`/conditions/${conditionId}/coverslips`, { body, schema: StudyDetail }),
    onSuccess: (study) => storeStudy(qc, study),
  });
}
