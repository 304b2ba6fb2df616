import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { ReportDetail, type CreateReportRequest } from '@shared/schemas/reports';
import { reportsQueryKey } from './useReports';
import { reportQueryKey } from './useReport';

/** POST /api/studies/:studyId/reports: freeze the current comparison into a new report. */
export function useCreateReport(studyId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateReportRequest) => api(`/studies/${studyId}/reports`, { body, schema: ReportDetail }),
    onSuccess: (r) => {
      qc.setQueryData(reportQueryKey(r.id), r);
      void qc.invalidateQueries({ queryKey: reportsQueryKey(studyId) });
    },
  });
}
