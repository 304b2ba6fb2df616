import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { RecipeListResponse } from '@shared/schemas/recipes';

export const reviewQueueCountQueryKey = ['recipes', 'list', { status: 'submitted' }] as const;

/** GET /api/recipes?status=submitted: recipe versions waiting for a facility manager's review. */
export function useReviewQueueCount(enabled = true) {
  return useQuery({
    queryKey: reviewQueueCountQueryKey,
    queryFn: async () => (await api('/recipes?status=submitted', { schema: RecipeListResponse })).recipes.length,
    enabled,
  });
}
