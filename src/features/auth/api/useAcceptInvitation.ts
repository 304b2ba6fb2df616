import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { MeResponse, type AcceptInvitationRequest } from '@shared/schemas/auth';
import { meQueryKey } from './useMe';
import { invitationQueryKey } from './useInvitation';

/** POST /api/auth/invitations/:token/accept: sets the password and signs in; the link then stops working. */
export function useAcceptInvitation(token: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: AcceptInvitationRequest) => api(`/auth/invitations/${encodeURIComponent(token)}/accept`, { body, schema: MeResponse }),
    onSuccess: (res) => {
      qc.clear();
      qc.setQueryData(meQueryKey, res.user);
      qc.removeQueries({ queryKey: invitationQueryKey(token) });
    },
  });
}
