import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { Lab, type CreateLabRequest } from '@shared/schemas/people';
import { labsQueryKey } from './useLabs';

/** POST /api/labs. */
export function useCreateLab() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateLabRequest) => api('/labs', { body, schema: Lab }),
    onSuccess: () => void qc.invalidateQueries({ queryKey: labsQueryKey }),
  });
}
