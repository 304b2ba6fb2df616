import { useQuery, type QueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { RecipeDetail } from '@shared/schemas/recipes';
import { recipesQueryKey } from './useRecipes';

export const recipeQueryKey = (id: number) => [...recipesQueryKey, 'one', id] as const;

/** GET /api/recipes/:id: settings, versions, history and what the user may do. */
export function useRecipe(id: number | null) {
  return useQuery({
    queryKey: recipeQueryKey(id ?? 0),
    enabled: id != null && id > 0,
    queryFn: () => api(`/recipes/${id}`, { schema: RecipeDetail }),
  });
}

/** After a change: store the fresh detail and refresh every list. */
export function storeRecipe(qc: QueryClient, r: RecipeDetail) {
  qc.setQueryData(recipeQueryKey(r.id), r);
  void qc.invalidateQueries({ queryKey: [...recipesQueryKey, 'list'] });
}
