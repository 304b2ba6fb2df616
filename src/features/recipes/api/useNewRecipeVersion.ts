import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { RecipeDetail, type UpdateRecipeRequest } from '@shared/schemas/recipes';
import { storeRecipe } from './useRecipe';

/** POST /api/recipes/:id/versions: a new draft version of an approved (or retired) recipe. */
export function useNewRecipeVersion(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: UpdateRecipeRequest) => api(`/recipes/${id}/versions`, { body, schema: RecipeDetail }),
    onSuccess: (r) => storeRecipe(qc, r),
  });
}
