import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { MeResponse, type ChangePasswordRequest } from '@shared/schemas/auth';
import { meQueryKey } from './useMe';

/** POST /api/auth/password: other sessions end; this one gets a fresh cookie. */
export function useChangePassword() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: ChangePasswordRequest) => api('/auth/password', { body, schema: MeResponse }),
    onSuccess: (res) => qc.setQueryData(meQueryKey, res.user),
  });
}
