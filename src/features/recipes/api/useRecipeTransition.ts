import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { RecipeDetail } from '@shared/schemas/recipes';
import { storeRecipe } from './useRecipe';

export type RecipeTransition = 'submit' | 'approve' | 'return' | 'retire';

/** POST /api/recipes/:id/{submit|approve|return|retire} with an optional note (required to return). */
export function useRecipeTransition() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, action, note }: { id: number; action: RecipeTransition; note?: string }) =>
      api(`/recipes/${id}/${action}`, { body: note ? { note } : {}, schema: RecipeDetail }),
    onSuccess: (r) => storeRecipe(qc, r),
  });
}
