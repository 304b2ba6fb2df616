import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { StudyDetail, type CreateConditionRequest } from '@shared/schemas/studies';
import { storeStudy } from './useStudy';

/** POST /api/studies/:studyId/conditions. */
export function useCreateCondition(studyId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateConditionRequest) => api(`/studies/${studyId}/conditions`, { body, schema: StudyDetail }),
    onSuccess: (study) => storeStudy(qc, study),
  });
}
