import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { MeResponse, type LoginRequest } from '@shared/schemas/auth';
import { meQueryKey } from './useMe';

/** POST /api/auth/login: on success the session cookie is set and the cached user replaced. */
export function useSignIn() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: LoginRequest) => api('/auth/login', { body, schema: MeResponse }),
    onSuccess: (res) => {
      qc.clear();
      qc.setQueryData(meQueryKey, res.user);
    },
  });
}
