import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { FieldDetail } from '@shared/schemas/fields';
import { fieldKeys } from './keys';

/** GET /api/fields/:id — size, bit depth, channel names, pixel size, files, saturation facts, canEdit. */
export function useField(fieldId: number) {
  return useQuery({
    queryKey: fieldKeys.detail(fieldId),
    queryFn: ({ signal }) => api(`/fields/${fieldId}`, { schema: FieldDetail, signal }),
    enabled: Number.isInteger(fieldId) && fieldId > 0,
  });
}
