import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { OkResponse } from '@shared/schemas/common';
import type { DeleteStudyRequest } from '@shared/schemas/studies';
import { studiesQueryKey } from './useStudies';
import { studyQueryKey } from './useStudy';

/** DELETE /api/studies/:studyId (owner; the body repeats the study name). */
export function useDeleteStudy(studyId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: DeleteStudyRequest) => api(`/studies/${studyId}`, { method: 'DELETE', body, schema: OkResponse }),
    onSuccess: () => {
      qc.removeQueries({ queryKey: studyQueryKey(studyId) });
      void qc.invalidateQueries({ queryKey: studiesQueryKey, exact: true });
    },
  });
}
