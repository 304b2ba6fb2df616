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
