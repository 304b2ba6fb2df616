// @vitest-environment jsdom
/** Account: password change with the shared rule and the server's field error. (common practice) */
import { describe, expect, it } from 'vitest';
import { screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { Component as Account } from '@/app/routes/Account';
import { asUser, demoUser, mockApi, on, renderRoutes } from './utils';

describe('Account', () => {
  it('changes the password; a wrong current password shows beside its field', async () => {
    let n = 0;
    const calls = mockApi(
      asUser(demoUser(['microscopist'])),
      on('POST', '/auth/password', () =>
        ++n === 1
          ? { status: 400, body: { error: 'currentPassword: that is not your current password', issues: [{ path: 'currentPassword', message: 'that is not your current password' }] } }
          : { body: { user: demoUser(['microscopist']) } },
      ),
    );
    renderRoutes([{ path: '/account', Component: Account }], '/account');
    const user = userEvent.setup();
    const form = await screen.findByRole('form', { name: 'Change password' });
    await user.type(within(form).getByLabelText('Current password'), 'old');
    await user.type(within(form).getByLabelText('New password'), 'short');
    await user.click(within(form).getByRole('button', { name: 'Change password' }));
    expect(within(form).getByText('use at least 10 characters')).toBeTruthy();
    expect(calls.some((c) => c.method === 'POST')).toBe(false);
    await user.clear(within(form).getByLabelText('New password'));
    await user.type(within(form).getByLabelText('New password'), 'a-better-password');
    await user.type(within(form).getByLabelText('Repeat the new password'), 'a-better-password');
    await user.click(within(form).getByRole('button', { name: 'Change password' }));
    expect(await within(form).findByText('that is not your current password')).toBeTruthy();
    expect(calls.find((c) => c.method === 'POST')?.body).toEqual({ currentPassword: 'old', newPassword: 'a-better-password' });
    await user.click(within(form).getByRole('button', { name: 'Change password' }));
    expect(await within(form).findByText(/Password changed/)).toBeTruthy();
    expect((within(form).getByLabelText('New password') as HTMLInputElement).value).toBe('');
  });
});
