import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { SampleSheetApplyResponse, type SampleSheetCheckRequest } from '@shared/schemas/sample-sheet';

/** POST /api/studies/:id/sample-sheet/apply — creates the sheet's conditions and coverslips, answers the uploads to send. */
export function useApplySampleSheet(studyId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: SampleSheetCheckRequest) => api(`/studies/${studyId}/sample-sheet/apply`, { body, schema: SampleSheetApplyResponse }),
    onSuccess: () => void qc.invalidateQueries({ queryKey: ['studies'] }), // new conditions and coverslips
  });
}
