import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { RunDetail, type CreateRunRequest } from '@shared/schemas/runs';
import { runsQueryKey } from './useRuns';
import { runQueryKey } from './useRun';

/** POST /api/runs { recipeId, scope }. */
export function useStartRun() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateRunRequest) => api('/runs', { body, schema: RunDetail }),
    onSuccess: (run) => {
      qc.setQueryData(runQueryKey(run.id), run);
      void qc.invalidateQueries({ queryKey: [...runsQueryKey, 'list'] });
    },
  });
}
