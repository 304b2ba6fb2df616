import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { ReportListResponse } from '@shared/schemas/reports';

export const reportsQueryKey = (studyId: number) => ['studies', studyId, 'reports'] as const;

/** GET /api/studies/:studyId/reports: the study's reports, newest first. */
export function useReports(studyId: number) {
  return useQuery({
    queryKey: reportsQueryKey(studyId),
    queryFn: async () => (await api(`/studies/${studyId}/reports`, { schema: ReportListResponse })).reports,
    enabled: Number.isInteger(studyId) && studyId > 0,
  });
}
