import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { ImportOutlinesResponse } from '@shared/schemas/cells';
import { cellsQueryKey } from './useCells';

/** POST /api/fields/:id/cells/geojson — outlines from a GeoJSON file in pixel coordinates, all or nothing. */
export function useImportOutlines(fieldId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ file, replace }: { file: File; replace: boolean }) => {
      const fd = new FormData();
      fd.append('file', file);
      return api(`/fields/${fieldId}/cells/geojson${replace ? '?replace=1' : ''}`, { method: 'POST', body: fd, schema: ImportOutlinesResponse });
    },
    onSuccess: () => qc.invalidateQueries({ queryKey: cellsQueryKey(fieldId) }),
  });
}
