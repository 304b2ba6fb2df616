/** The notifications feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { notificationsQueryKey, useNotifications } from './api/useNotifications';
export { NotificationsSection } from './components/NotificationsSection';
