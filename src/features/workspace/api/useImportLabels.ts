import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { ImportLabelsResponse } from '@shared/schemas/cells';
import { cellsQueryKey } from './useCells';

/** POST /api/fields/:id/cells/import — a label TIFF (0 = background, each positive value one cell). */
export function useImportLabels(fieldId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ file, replace }: { file: File; replace: boolean }) => {
      const fd = new FormData();
      fd.append('file', file);
      return api(`/fields/${fieldId}/cells/import${replace ? '?replace=1' : ''}`, { method: 'POST', body: fd, schema: ImportLabelsResponse });
    },
    onSuccess: () => qc.invalidateQueries({ queryKey: cellsQueryKey(fieldId) }),
  });
}
