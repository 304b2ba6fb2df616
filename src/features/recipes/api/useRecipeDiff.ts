import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { RecipeDiffResponse } from '@shared/schemas/recipes';
import { recipesQueryKey } from './useRecipes';

export const recipeDiffQueryKey = (a: number, b: number) => [...recipesQueryKey, 'diff', a, b] as const;

/** GET /api/recipes/:a/diff/:b: setting-by-setting sentences of two versions. */
export function useRecipeDiff(a: number | null, b: number | null) {
  return useQuery({
    queryKey: recipeDiffQueryKey(a ?? 0, b ?? 0),
    enabled: !!a && !!b,
    queryFn: () => api(`/recipes/${a}/diff/${b}`, { schema: RecipeDiffResponse }),
  });
}
