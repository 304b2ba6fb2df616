import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { MeasurementSources } from '@shared/schemas/cell-table';

export const measurementSourcesQueryKey = (studyId: number) => ['studies', studyId, 'measurement-sources'] as const;

/** GET /api/studies/:studyId/measurement-sources: recipes and runs that produced measurements in the study. */
export function useMeasurementSources(studyId: number) {
  return useQuery({
    queryKey: measurementSourcesQueryKey(studyId),
    queryFn: () => api(`/studies/${studyId}/measurement-sources`, { schema: MeasurementSources }),
    enabled: studyId > 0,
  });
}
