/** Form helpers use the shared zod schemas unchanged and place server issues by field path. (common practice) */
import { describe, expect, it } from 'vitest';
import { LoginRequest, ChangePasswordRequest, AcceptInvitationRequest } from '@shared/schemas/auth';
import { InviteUserRequest } from '@shared/schemas/people';
import { CreateCoverslipRequest, CreateStudyRequest, DeleteStudyRequest } from '@shared/schemas/studies';
import { ApiError } from '@/lib/api';
import { serverErrors, validate } from '@/lib/form';
import { safeNext } from '@/features/auth/lib/safeNext';

describe('validate with the shared schemas', () => {
  it('gives the schema’s own message per field', () => {
    const r = validate(LoginRequest, { email: 'not-an-address', password: '' });
    expect(r.ok).toBe(false);
    if (!r.ok) {
      expect(r.errors.email).toBe('enter an e-mail address');
      expect(r.errors.password).toBe('enter your password');
    }
  });
  it('accepts and normalizes what the server accepts', () => {
    const r = validate(LoginRequest, { email: '  Manager@Demo.Test ', password: 'x' });
    expect(r).toEqual({ ok: true, data: { email: 'manager@demo.test', password: 'x' } });
  });
  it('holds new passwords to the server rule (at least 10 characters)', () => {
    const short = validate(AcceptInvitationRequest, { password: 'nine-char' });
    expect(short.ok).toBe(false);
    if (!short.ok) expect(short.errors.password).toBe('use at least 10 characters');
    expect(validate(AcceptInvitationRequest, { password: 'ten-chars!' }).ok).toBe(true);
    const change = validate(ChangePasswordRequest, { currentPassword: '', newPassword: 'long-enough-1' });
    expect(change.ok).toBe(false);
    if (!change.ok) expect(Object.keys(change.errors)).toEqual(['currentPassword']);
  });
  it('rejects an invitation without a role, and an empty study name', () => {
    const inv = validate(InviteUserRequest, { email: 'a@b.test', name: 'A', roles: [] });
    expect(inv.ok).toBe(false);
    if (!inv.ok) expect(inv.errors.roles).toBe('choose at least one role');
    const st = validate(CreateStudyRequest, { name: '   ' });
    expect(st.ok).toBe(false);
    if (!st.ok) expect(st.errors.name).toBe('enter a study name');
  });
  it('rejects a coverslip date that is not YYYY-MM-DD and keeps nested paths', () => {
    const r = validate(CreateCoverslipRequest, { preparedOn: '1/2/2026' });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.errors.preparedOn).toBe('use the form YYYY-MM-DD');
    expect(validate(DeleteStudyRequest, {}).ok).toBe(false);
  });
});

describe('serverErrors', () => {
  it('puts each server issue beside its field', () => {
    const e = new ApiError(400, 'email: taken', [{ path: 'email', message: 'an account with this e-mail exists' }]);
    expect(serverErrors(e, ['email', 'name'])).toEqual({ email: 'an account with this e-mail exists' });
  });
  it('shows a failure without field issues above the buttons', () => {
    expect(serverErrors(new ApiError(401, 'that e-mail and password do not match an active account'), ['email'])).toEqual({
      _form: 'that e-mail and password do not match an active account',
    });
    expect(serverErrors(new Error('offline'))).toEqual({ _form: 'offline' });
    expect(serverErrors(null)).toEqual({});
  });
  it('keeps the message visible when the issue names no field of this form', () => {
    const e = new ApiError(400, 'labId: no such lab', [{ path: 'labId', message: 'no such lab' }]);
    expect(serverErrors(e, ['name'])._form).toBe('labId: no such lab');
  });
});

describe('safeNext (where sign-in goes afterwards)', () => {
  it('keeps paths inside the site and refuses other hosts', () => {
    expect(safeNext('/studies/3?tab=x')).toBe('/studies/3?tab=x');
    expect(safeNext(null)).toBe('/');
    expect(safeNext('https://evil.test/')).toBe('/');
    expect(safeNext('//evil.test/')).toBe('/');
    expect(safeNext('/\\evil.test')).toBe('/');
    expect(safeNext('/signin?next=/x')).toBe('/');
  });
});
