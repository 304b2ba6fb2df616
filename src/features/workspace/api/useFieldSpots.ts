import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { FieldSpotsResponse } from '@shared/schemas/runs';

export const fieldSpotsQueryKey = (runId: number, fieldId: number) => ['runs', runId, 'fields', fieldId, 'spots'] as const;

/** GET /api/runs/:runId/fields/:fieldId/spots — the spots a run stored for the field (none when its recipe had spots off). */
export function useFieldSpots(runId: number | null, fieldId: number) {
  return useQuery({
    queryKey: fieldSpotsQueryKey(runId ?? 0, fieldId),
    queryFn: ({ signal }) => api(`/runs/${runId}/fields/${fieldId}/spots`, { schema: FieldSpotsResponse, signal }),
    enabled: runId !== null,
    retry: false,
  });
}
