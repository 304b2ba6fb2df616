import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { StudyDetail, type UpdateStudyRequest } from '@shared/schemas/studies';
import { storeStudy } from './useStudy';

/** PATCH /api/studies/:studyId (name, description, default instrument). */
export function useUpdateStudy(studyId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: UpdateStudyRequest) => api(`/studies/${studyId}`, { method: 'PATCH', body, schema: StudyDetail }),
    onSuccess: (study) => storeStudy(qc, study),
  });
}
