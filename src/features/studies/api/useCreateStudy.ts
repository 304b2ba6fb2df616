import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { StudyDetail, type CreateStudyRequest } from '@shared/schemas/studies';
import { storeStudy } from './useStudy';

/** POST /api/studies (biologists). */
export function useCreateStudy() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateStudyRequest) => api('/studies', { body, schema: StudyDetail }),
    onSuccess: (study) => storeStudy(qc, study),
  });
}
