import { useQuery } from '@tanstack/react-query';
import { api } from '@/lib/api';
import { NotificationSettings } from '@shared/schemas/notifications';

export const notificationsQueryKey = ['notifications'] as const;

/** GET /api/notifications: which e-mail notifications the signed-in user receives. */
export function useNotifications() {
  return useQuery({ queryKey: notificationsQueryKey, queryFn: () => api('/notifications', { schema: NotificationSettings }) });
}
