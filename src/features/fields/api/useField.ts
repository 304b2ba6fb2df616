import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { FieldDetail } from '@shared/schemas/fields';

/** Same key as the workspace's useFieldDetail, so both share one cache entry. */
export const fieldQueryKey = (fieldId: number) => ['fields', fieldId, 'detail'] as const;

/** GET /api/fields/:id — facts, channel names, pixel size, files, canEdit. */
export function useField(fieldId: number) {
  return useQuery({
    queryKey: fieldQueryKey(fieldId),
    queryFn: ({ signal }) => api(`/fields/${fieldId}`, { schema: FieldDetail, signal }),
    enabled: Number.isInteger(fieldId) && fieldId > 0,
  });
}
