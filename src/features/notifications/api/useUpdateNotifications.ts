import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { NotificationSettings, type UpdateNotificationsRequest } from '@shared/schemas/notifications';
import { notificationsQueryKey } from './useNotifications';

/** PUT /api/notifications { off }: the kinds listed are turned off, the others on. */
export function useUpdateNotifications() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: UpdateNotificationsRequest) => api('/notifications', { method: 'PUT', body, schema: NotificationSettings }),
    onSuccess: (data) => qc.setQueryData(notificationsQueryKey, data),
  });
}
