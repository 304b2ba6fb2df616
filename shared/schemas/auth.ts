import { z } from 'zod';

export const RoleSchema = z.enum(['microscopist', 'facility_manager', 'biologist', 'collaborator']);
export type Role = z.infer<typeof RoleSchema>;

export const LoginRequest = z.object({
  email: z.string().trim().toLowerCase().email('enter an e-mail address'),
  password: z.string().min(1, 'enter your password').max(200),
});
export type LoginRequest = z.infer<typeof LoginRequest>;

export const MeUser = z.object({
  id: z.number().int(),
  email: z.string(),
  name: z.string(),
  roles: z.array(RoleSchema),
});
export type MeUser = z.infer<typeof MeUser>;

export const MeResponse = z.object({ user: MeUser });
export type MeResponse = z.infer<typeof MeResponse>;

/**
 * Auth routes (server/routes/auth.ts), all under /api:
 *   POST /auth/login                       LoginRequest → MeResponse (sets the session cookie);
 *                                          401 wrong credentials, 429 too many failed attempts (one generic message)
 *   GET  /auth/me                          → MeResponse | 401
 *   POST /auth/logout                      → { ok: true }
 *   POST /auth/password                    ChangePasswordRequest → MeResponse (other sessions end; cookie re-issued)
 *   GET  /auth/invitations/:token          → InvitationInfo | 404 unknown | 410 used or expired
 *   POST /auth/invitations/:token/accept   AcceptInvitationRequest → MeResponse (signs in; the link then stops working)
 */
export const NewPassword = z
  .string({ message: 'enter a new password' })
  .min(10, 'use at least 10 characters')
  .max(200, 'use at most 200 characters');

export const ChangePasswordRequest = z.object({
  currentPassword: z.string({ message: 'enter your current password' }).min(1, 'enter your current password').max(200),
  newPassword: NewPassword,
});
export type ChangePasswordRequest = z.infer<typeof ChangePasswordRequest>;

export const InvitationInfo = z.object({ email: z.string(), name: z.string(), roles: z.array(RoleSchema), expiresAt: z.string() });
export type InvitationInfo = z.infer<typeof InvitationInfo>;

export const AcceptInvitationRequest = z.object({ password: NewPassword });
export type AcceptInvitationRequest = z.infer<typeof AcceptInvitationRequest>;
