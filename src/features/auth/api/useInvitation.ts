import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { InvitationInfo } from '@shared/schemas/auth';

export const invitationQueryKey = (token: string) => ['auth', 'invitation', token] as const;

/** GET /api/auth/invitations/:token: who is invited (404 unknown, 410 used or expired). */
export function useInvitation(token: string) {
  return useQuery({
    queryKey: invitationQueryKey(token),
    queryFn: () => api(`/auth/invitations/${encodeURIComponent(token)}`, { schema: InvitationInfo }),
    retry: false,
  });
}
