import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { RecipeListResponse, type RecipeStatus } from '@shared/schemas/recipes';

export const recipesQueryKey = ['recipes'] as const;

/** GET /api/recipes?status=…: recipes, optionally only some statuses. */
export function useRecipes(statuses?: RecipeStatus[]) {
  const qs = statuses?.length ? '?' + statuses.map((s) => `status=${s}`).join('&') : '';
  return useQuery({
    queryKey: [...recipesQueryKey, 'list', statuses ?? []],
    queryFn: async () => (await api(`/recipes${qs}`, { schema: RecipeListResponse })).recipes,
  });
}
