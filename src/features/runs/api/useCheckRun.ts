import { useMutation } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { RunCheckResponse, type CreateRunRequest } from '@shared/schemas/runs';

/** POST /api/runs/check { recipeId, scope }: the scope's fields the recipe can measure, and the blocked ones with why. Writes nothing, caches nothing. */
export function useCheckRun() {
  return useMutation({
    mutationFn: (body: CreateRunRequest) => api('/runs/check', { body, schema: RunCheckResponse }),
  });
}
