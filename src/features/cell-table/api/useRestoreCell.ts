import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { ExclusionState } from '@shared/schemas/cell-table';
import { cellTableQueryKey } from './useCellTable';
import { comparisonQueryKey } from '@/features/compare';

/** DELETE /api/cells/:cellId/exclusion: undo an exclusion (audited). */
export function useRestoreCell(studyId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ cellId }: { cellId: number }) => api(`/cells/${cellId}/exclusion`, { method: 'DELETE', body: {}, schema: ExclusionState }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: cellTableQueryKey(studyId) });
      void qc.invalidateQueries({ queryKey: comparisonQueryKey(studyId) });
    },
  });
}
