/** The auth feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { useInvitation } from './api/useInvitation';
export { useMe } from './api/useMe';
export { AcceptInviteForm } from './components/AcceptInviteForm';
export { AuthFrame } from './components/AuthFrame';
export { ChangePasswordForm } from './components/ChangePasswordForm';
export { SignInForm } from './components/SignInForm';
export { SignOutButton } from './components/SignOutButton';
export { ROLE_DUTIES, ROLE_LABELS, RoleBadges } from './components/RoleBadges';
export { safeNext } from './lib/safeNext';
