import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { RecipeDetail, type CreateRecipeRequest } from '@shared/schemas/recipes';
import { storeRecipe } from './useRecipe';

/** POST /api/recipes: a new draft (anyone but collaborators). */
export function useCreateRecipe() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateRecipeRequest) => api('/recipes', { body, schema: RecipeDetail }),
    onSuccess: (r) => storeRecipe(qc, r),
  });
}
