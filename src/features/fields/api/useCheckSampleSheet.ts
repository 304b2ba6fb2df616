import { useMutation } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { SampleSheetCheckResponse, type SampleSheetCheckRequest } from '@shared/schemas/sample-sheet';

/** POST /api/studies/:id/sample-sheet/check — validates a sample sheet; stores nothing, so nothing to invalidate. */
export function useCheckSampleSheet(studyId: number) {
  return useMutation({
    mutationFn: (body: SampleSheetCheckRequest) => api(`/studies/${studyId}/sample-sheet/check`, { body, schema: SampleSheetCheckResponse }),
  });
}
