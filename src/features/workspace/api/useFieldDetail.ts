import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { FieldDetail } from '@shared/schemas/fields';

export const fieldDetailQueryKey = (fieldId: number) => ['fields', fieldId, 'detail'] as const;

/** GET /api/fields/:id — size, bit depth, channel names, pixel size, saturation facts, canEdit. */
export function useFieldDetail(fieldId: number) {
  return useQuery({ queryKey: fieldDetailQueryKey(fieldId), queryFn: ({ signal }) => api(`/fields/${fieldId}`, { schema: FieldDetail, signal }), enabled: Number.isInteger(fieldId) && fieldId > 0 });
}
