import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { FieldSummary, type SetFieldPixelSizeRequest } from '@shared/schemas/fields';
import { fieldKeys } from './keys';

/** PUT /api/fields/:id/pixel-size { pixelSizeUm } — µm per pixel for a field whose files carry none (null clears it). */
export function useSetPixelSize(fieldId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: SetFieldPixelSizeRequest) => api(`/fields/${fieldId}/pixel-size`, { method: 'PUT', body, schema: FieldSummary }),
    // the detail (header, scale bar, µm settings) and the lists that show the field
    onSuccess: () => void qc.invalidateQueries({ queryKey: fieldKeys.all }),
  });
}

