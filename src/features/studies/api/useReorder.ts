import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { StudyDetail, type ReorderRequest } from '@shared/schemas/studies';
import { storeStudy } from './useStudy';

/** POST /api/studies/:studyId/reorder (conditions, and coverslips within a condition). */
export function useReorder(studyId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: ReorderRequest) => api(`/studies/${studyId}/reorder`, { body, schema: StudyDetail }),
    onSuccess: (study) => storeStudy(qc, study),
  });
}
