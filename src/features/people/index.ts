/** The people feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { useLabs } from './api/useLabs';
export { useUsers } from './api/useUsers';
export { InviteUserDialog } from './components/InviteUserDialog';
export { LabsPanel } from './components/LabsPanel';
export { UserTable } from './components/UserTable';
