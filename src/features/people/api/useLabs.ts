import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { LabListResponse } from '@shared/schemas/people';

export const labsQueryKey = ['labs'] as const;

/** GET /api/labs (facility managers: all labs; others: their own). */
export function useLabs(enabled = true) {
  return useQuery({
    queryKey: labsQueryKey,
    queryFn: async () => (await api('/labs', { schema: LabListResponse })).labs,
    enabled,
  });
}
