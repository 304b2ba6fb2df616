import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { StudyFieldsResponse } from '@shared/schemas/fields';

export const studyFieldsQueryKey = (studyId: number) => ['fields', 'study', studyId] as const;

/** GET /api/studies/:studyId/fields — every field of a study, with its condition. */
export function useStudyFields(studyId: number) {
  return useQuery({
    queryKey: studyFieldsQueryKey(studyId),
    queryFn: ({ signal }) => api(`/studies/${studyId}/fields`, { schema: StudyFieldsResponse, signal }),
    enabled: Number.isInteger(studyId) && studyId > 0,
  });
}
