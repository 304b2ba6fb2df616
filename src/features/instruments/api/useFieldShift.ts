import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { FieldShift } from '@shared/schemas/instruments';
import { instrumentKeys } from './keys';

/** GET /api/fields/:id/shift: the field's own channel shift and curves, measured by the server when asked (`enabled`). */
export function useFieldShift(fieldId: number, enabled: boolean, maxShift = 8) {
  return useQuery({
    queryKey: instrumentKeys.fieldShift(fieldId, maxShift),
    enabled,
    staleTime: Infinity,
    retry: false,
    queryFn: ({ signal }) => api(`/fields/${fieldId}/shift?maxShift=${maxShift}`, { schema: FieldShift, signal }),
  });
}
