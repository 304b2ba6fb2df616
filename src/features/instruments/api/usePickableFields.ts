import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { StudyListResponse } from '@shared/schemas/studies';
import { StudyFieldsResponse } from '@shared/schemas/fields';
import { instrumentKeys } from './keys';

/** GET /api/studies: the studies whose fields a calibration may be measured from (those the user may see). */
export function usePickableStudies() {
  return useQuery({ queryKey: instrumentKeys.pickStudies, queryFn: async ({ signal }) => (await api('/studies', { schema: StudyListResponse, signal })).studies });
}

/** GET /api/studies/:id/fields of the chosen study (none until one is chosen). */
export function usePickableFields(studyId: number | null) {
  return useQuery({
    queryKey: instrumentKeys.pickFields(studyId ?? 0),
    enabled: studyId !== null && studyId > 0,
    queryFn: async ({ signal }) => (await api(`/studies/${studyId}/fields`, { schema: StudyFieldsResponse, signal })).fields,
  });
}
