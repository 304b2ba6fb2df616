import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { StudyListResponse } from '@shared/schemas/studies';

export const studiesQueryKey = ['studies'] as const;

/** GET /api/studies: the studies the signed-in user may see. */
export function useStudies() {
  return useQuery({
    queryKey: studiesQueryKey,
    queryFn: async () => (await api('/studies', { schema: StudyListResponse })).studies,
  });
}
