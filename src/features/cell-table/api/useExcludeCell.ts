import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { ExclusionState } from '@shared/schemas/cell-table';
import { cellTableQueryKey } from './useCellTable';
import { comparisonQueryKey } from '@/features/compare';

/** POST /api/cells/:cellId/exclusion { reason }: exclude a cell (audited). Refreshes the table and comparisons. */
export function useExcludeCell(studyId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ cellId, reason }: { cellId: number; reason: string }) => api(`/cells/${cellId}/exclusion`, { method: 'POST', body: { reason }, schema: ExclusionState }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: cellTableQueryKey(studyId) });
      void qc.invalidateQueries({ queryKey: comparisonQueryKey(studyId) });
    },
  });
}
