import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { StudyFieldsResponse } from '@shared/schemas/fields';

import { fieldKeys } from './keys';

/** GET /api/studies/:studyId/fields — every field of a study, with its condition. */
export function useStudyFields(studyId: number) {
  return useQuery({
    queryKey: fieldKeys.study(studyId),
    queryFn: ({ signal }) => api(`/studies/${studyId}/fields`, { schema: StudyFieldsResponse, signal }),
    enabled: Number.isInteger(studyId) && studyId > 0,
  });
}
