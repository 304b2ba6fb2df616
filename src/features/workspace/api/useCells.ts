import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { CellList } from '@shared/schemas/cells';

export const cellsQueryKey = (fieldId: number) => ['fields', fieldId, 'cells'] as const;

/** GET /api/fields/:id/cells — the field's outlines (deleted ones excluded). */
export function useCells(fieldId: number) {
  return useQuery({ queryKey: cellsQueryKey(fieldId), queryFn: ({ signal }) => api(`/fields/${fieldId}/cells`, { schema: CellList, signal }) });
}
