import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { RecipeDetail, type UpdateRecipeRequest } from '@shared/schemas/recipes';
import { storeRecipe } from './useRecipe';

/** PATCH /api/recipes/:id: edit a draft or returned version. */
export function useUpdateRecipe(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: UpdateRecipeRequest) => api(`/recipes/${id}`, { method: 'PATCH', body, schema: RecipeDetail }),
    onSuccess: (r) => storeRecipe(qc, r),
  });
}
