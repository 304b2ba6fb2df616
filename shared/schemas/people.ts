/**
 * The people of the facility (screen "People & labs"): users, invitations and labs, for facility managers.
 * API paths /api/users and /api/labs. Server: server/routes/people.ts; client: src/features/people.
 *
 *   GET    /users                     → UserListResponse
 *   POST   /users                     InviteUserRequest → InviteUserResponse (201; mails the invitation link)
 *   PATCH  /users/:id                 UpdateUserRequest → UserRow  (roles, name, disabled; disabling signs the user out)
 *   POST   /users/:id/invite          → InviteUserResponse (re-send a fresh link; the old one stops working)
 *   GET    /labs                      → LabListResponse (facility managers: all; others: their labs)
 *   POST   /labs                      CreateLabRequest → Lab (201)
 *   PATCH  /labs/:id                  UpdateLabRequest → Lab
 *   DELETE /labs/:id                  → OkResponse (409 while studies belong to it)
 *   PUT    /labs/:id/members/:userId  → Lab
 *   DELETE /labs/:id/members/:userId  → Lab
 */
import { z } from 'zod';
import { RoleSchema } from './auth.js';
import { Id, IsoDate, Name } from './common.js';

export const UserRow = z.object({
  id: Id,
  email: z.string(),
  name: z.string(),
  roles: z.array(RoleSchema),
  disabled: z.boolean(),
  /** 'active' has a password; 'invited' still waits for the invitation to be accepted */
  status: z.enum(['active', 'invited', 'disabled']),
  labIds: z.array(Id),
  createdAt: IsoDate,
});
export type UserRow = z.infer<typeof UserRow>;
export const UserListResponse = z.object({ users: z.array(UserRow) });
export type UserListResponse = z.infer<typeof UserListResponse>;

const Roles = z.array(RoleSchema).min(1, 'choose at least one role').refine((r) => new Set(r).size === r.length, 'a role is listed twice');

export const InviteUserRequest = z.object({
  email: z.string({ message: 'enter an e-mail address' }).trim().toLowerCase().email('enter an e-mail address'),
  name: Name('name'),
  roles: Roles,
  labIds: z.array(Id).optional(),
});
export type InviteUserRequest = z.infer<typeof InviteUserRequest>;
export const InviteUserResponse = z.object({ user: UserRow, expiresAt: IsoDate });
export type InviteUserResponse = z.infer<typeof InviteUserResponse>;

export const UpdateUserRequest = z
  .object({ name: Name('name').optional(), roles: Roles.optional(), disabled: z.boolean().optional() })
  .refine((v) => v.name !== undefined || v.roles !== undefined || v.disabled !== undefined, { message: 'nothing to change' });
export type UpdateUserRequest = z.infer<typeof UpdateUserRequest>;

export const LabMember = z.object({ id: Id, name: z.string(), email: z.string(), roles: z.array(RoleSchema) });
export const Lab = z.object({ id: Id, name: z.string(), createdAt: IsoDate, studyCount: z.number().int(), members: z.array(LabMember) });
export type Lab = z.infer<typeof Lab>;
export const LabListResponse = z.object({ labs: z.array(Lab) });
export type LabListResponse = z.infer<typeof LabListResponse>;
export const CreateLabRequest = z.object({ name: Name('lab name') });
export type CreateLabRequest = z.infer<typeof CreateLabRequest>;
export const UpdateLabRequest = CreateLabRequest;
export type UpdateLabRequest = z.infer<typeof UpdateLabRequest>;
